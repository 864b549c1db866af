// `npm start`: makes sure the demo scenes exist (generated once into .cache/demo), then serves the app with vite.
import { existsSync } from 'node:fs';
import { spawn, spawnSync } from 'node:child_process';

const demoDir = process.env.SEAMTALLY_DEMO_DIR ?? '.cache/demo';
const port = process.env.PORT ?? '5173';

if (!existsSync(`${demoDir}/manifest.json`)) {
  console.log(`[start] generating the demo scenes into ${demoDir} (once; takes a minute)…`);
  const r = spawnSync(process.execPath, ['bin/seamtally.mjs', 'demo', '--out', demoDir], { stdio: 'inherit' });
  if (r.status !== 0) {
    console.error('[start] the demo could not be generated; the app will open without it. Open your own scenes instead.');
  }
}

const vite = spawn('npx', ['vite', '--port', port, '--host', '127.0.0.1', '--bypass-lock'], { stdio: ['inherit', 'pipe', 'inherit'] });
let announced = false;
vite.stdout.on('data', (chunk) => {
  process.stdout.write(chunk);
  const m = /http:\/\/[^\s]+/.exec(String(chunk).replace(/\x1b\[[0-9;]*m/g, ''));
  if (m && !announced) {
    announced = true;
    console.log(`\n  seamtally is ready: open ${m[0]} in Chromium, Chrome, Edge or Firefox.\n`);
  }
});
const stop = () => vite.kill('SIGTERM');
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
vite.on('exit', (code) => process.exit(code ?? 0));
