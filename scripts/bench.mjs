// `npm run bench [-- --quick|--big|--smoke|--no-browser|--tiles N|--model FILE]`: runs bench/main.ts through tsx.
// What each figure means: bench/README.md. Results: bench/results.json (git-ignored) and a table on stdout.
import { spawnSync } from 'node:child_process';

const r = spawnSync(process.execPath, ['--import', 'tsx', 'bench/main.ts', ...process.argv.slice(2)], { stdio: 'inherit' });
process.exit(r.status ?? 1);
