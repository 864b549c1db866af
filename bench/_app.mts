import { startVite, appRun } from './browser.ts';
const s = await startVite(5184, 'bench/cache');
try {
  for (const w of [1, 2]) console.log(w, JSON.stringify(await appRun(s, 'app-bench-4000.manifest.json', w)));
} finally { s.stop(); }
