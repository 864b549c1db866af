// A date suggested from a scene's file name when the file itself carries none. Suppliers name files with the
// acquisition date as YYYYMMDD or YYYY-MM-DD (also YYYY_MM_DD); the first such run of digits that is a real calendar
// date between 1990 and 2099 is the suggestion. A suggestion is never acted on before the analyst confirms it.

/** The first plausible date in `name` as YYYY-MM-DD, or null. */
export function dateFromFileName(name: string): string | null {
  const re = /(?<![0-9])((?:19|20)\d{2})([-_]?)(\d{2})\2(\d{2})(?![0-9])/g;
  for (const m of name.matchAll(re)) {
    const [y, mo, d] = [Number(m[1]), Number(m[3]), Number(m[4])];
    if (y < 1990 || mo < 1 || mo > 12 || d < 1) continue;
    const days = new Date(Date.UTC(y, mo, 0)).getUTCDate(); // day 0 of the next month: this month's length
    if (d > days) continue;
    return `${m[1]}-${m[3]}-${m[4]}`;
  }
  return null;
}
