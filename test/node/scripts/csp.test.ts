// The Content-Security-Policy text and the allowed-imagery-origins list (scripts/csp.ts). What each directive means
// is from W3C Content Security Policy Level 3 (§6 directives; 'wasm-unsafe-eval' §2.3.1); the browser suite
// (test/browser/security.spec.ts) checks that Chromium enforces it.
import { describe, expect, it } from 'vitest';
import { contentSecurityPolicy, metaContentSecurityPolicy, parseImageryOrigins } from '../../../scripts/csp.ts';

const directive = (policy: string, name: string) => policy.split('; ').find((d) => d.startsWith(`${name} `));

describe('contentSecurityPolicy', () => {
  it('allows WebAssembly but no eval, scripts only from the app, network only to the app (+ data:) and listed origins', () => {
    const p = contentSecurityPolicy(['https://imagery.example.org']);
    expect(directive(p, 'script-src')).toBe("script-src 'self' 'wasm-unsafe-eval'");
    expect(directive(p, 'connect-src')).toBe("connect-src 'self' data: https://imagery.example.org");
    expect(directive(p, 'worker-src')).toBe("worker-src 'self' blob:");
    expect(directive(p, 'img-src')).toBe("img-src 'self' blob: data:");
    expect(directive(p, 'object-src')).toBe("object-src 'none'");
    expect(p).not.toMatch(/'unsafe-eval'|https?:(?!\/\/imagery)|\*/);
  });
  it('has no frame-ancestors in the meta form (CSP 3 §6.4.2: ignored in <meta>)', () => {
    expect(contentSecurityPolicy()).toContain("frame-ancestors 'none'");
    expect(metaContentSecurityPolicy()).not.toContain('frame-ancestors');
    expect(directive(metaContentSecurityPolicy(), 'connect-src')).toBe("connect-src 'self' data:");
  });
});

describe('parseImageryOrigins', () => {
  const rows: Array<{ input: string | undefined; expected: string[] }> = [
    { input: undefined, expected: [] },
    { input: '', expected: [] },
    { input: 'https://imagery.example.org', expected: ['https://imagery.example.org'] },
    { input: 'https://a.example.org/, http://10.0.0.5:8080 https://a.example.org', expected: ['https://a.example.org', 'http://10.0.0.5:8080'] },
    { input: 'HTTPS://Imagery.Example.org:443', expected: ['https://imagery.example.org'] },
  ];
  for (const { input, expected } of rows) it(`reads ${JSON.stringify(input)}`, () => expect(parseImageryOrigins(input)).toEqual(expected));
  for (const bad of ['*', 'https://*.example.org', 'imagery.example.org', 'ftp://x.example.org', 'https://x.example.org/cogs/', 'https://u:p@x.example.org']) {
    it(`refuses ${bad}`, () => expect(() => parseImageryOrigins(bad)).toThrow(/SEAMTALLY_IMAGERY_ORIGINS/));
  }
});
