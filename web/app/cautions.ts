// The standing cautions: always visible in the page footer, and repeated in every report and export.

export const cautionLines: readonly string[] = [
  'Counts are machine estimates with uncertainty: verify on the imagery before acting on them.',
  'Respect privacy law and the licence terms of your imagery; keep personal data out of exports you share.',
  'Defer to local rules, permits and licensed professional practice; this tool is no substitute for a site survey.',
];

/** One-line caution strip for the page footer. */
export function cautionStrip(el: HTMLElement): void {
  el.textContent = `Caution — ${cautionLines.join(' ')} Everything stays in this browser: nothing is uploaded.`;
  el.setAttribute('data-testid', 'cautions');
}
