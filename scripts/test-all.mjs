// `npm test`: type-check, then the Node suite (vitest) and the browser suite (Playwright); prints one total line.
import { spawnSync } from 'node:child_process';
import { readFileSync, existsSync, mkdirSync } from 'node:fs';

mkdirSync('test-results', { recursive: true });
let passed = 0;
let failed = 0;
let skipped = 0;

const step = (name, cmd, args, env = {}) => {
  console.log(`\n=== ${name}: ${cmd} ${args.join(' ')}`);
  const r = spawnSync(cmd, args, { stdio: 'inherit', env: { ...process.env, ...env } });
  return r.status ?? 1;
};

// 1. Type-check counts as one test: a type error fails the suite.
if (step('typecheck', 'npx', ['tsc', '-p', 'tsconfig.json', '--noEmit']) === 0) passed++; else failed++;

// 2. Node suite.
const vitestJson = 'test-results/vitest.json';
const vrc = step('node tests', 'npx', ['vitest', 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${vitestJson}`]);
if (existsSync(vitestJson)) {
  const v = JSON.parse(readFileSync(vitestJson, 'utf8'));
  passed += v.numPassedTests ?? 0;
  // A file that failed to load has no failed tests of its own: count each such file once.
  const filesWithFailedTests = (v.testResults ?? []).filter((f) => (f.assertionResults ?? []).some((a) => a.status === 'failed')).length;
  failed += (v.numFailedTests ?? 0) + Math.max(0, (v.numFailedTestSuites ?? 0) - filesWithFailedTests);
  skipped += (v.numPendingTests ?? 0) + (v.numTodoTests ?? 0);
  if (vrc !== 0 && !v.numFailedTests && !v.numFailedTestSuites) failed++;
} else if (vrc !== 0) failed++;

// 3. Browser suite.
const pwJson = 'test-results/playwright.json';
const prc = step('browser tests', 'npx', ['playwright', 'test'], { PLAYWRIGHT_JSON_OUTPUT_NAME: pwJson });
if (existsSync(pwJson)) {
  const p = JSON.parse(readFileSync(pwJson, 'utf8'));
  const s = p.stats ?? {};
  passed += (s.expected ?? 0) + (s.flaky ?? 0);
  failed += s.unexpected ?? 0;
  skipped += s.skipped ?? 0;
  if (prc !== 0 && !s.unexpected) failed++;
} else if (prc !== 0) failed++;

console.log(`\n${passed} passed, ${failed} failed, ${skipped} skipped`);
process.exit(failed > 0 ? 1 : 0);
