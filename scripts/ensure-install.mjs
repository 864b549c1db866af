// Set-up step of `npm start` / `npm test`: installs npm packages and the Debian tools the tests need, once.
import { existsSync } from 'node:fs';
import { execSync } from 'node:child_process';

const env = { ...process.env, ONNXRUNTIME_NODE_INSTALL: 'skip' };
const has = (cmd) => {
  try { execSync(`command -v ${cmd}`, { stdio: 'ignore', shell: '/bin/bash' }); return true; } catch { return false; }
};
const hasPy = (mod) => {
  try { execSync(`/usr/bin/python3 -c 'import ${mod}'`, { stdio: 'ignore' }); return true; } catch { return false; }
};
const run = (cmd) => { console.error(`[setup] ${cmd}`); execSync(cmd, { stdio: 'inherit', env, shell: '/bin/bash' }); };

if (!existsSync('node_modules/.package-lock.json')) run('npm ci --no-audit --no-fund');

const wantTools = process.argv.includes('--tools') || process.env.npm_lifecycle_event === 'pretest';
const missing = [];
if (!has('chromium')) missing.push('chromium');
if (wantTools && !has('gdalinfo')) missing.push('gdal-bin');
if (wantTools && !hasPy('numpy')) missing.push('python3-numpy');
if (missing.length) {
  const isRoot = process.getuid?.() === 0;
  const sudo = isRoot ? '' : (has('sudo') ? 'sudo ' : null);
  if (sudo === null) {
    console.error(`[setup] Please install the Debian packages ${missing.join(' ')} (apt-get install -y ${missing.join(' ')}) and run again.`);
    process.exit(1);
  }
  run(`${sudo}apt-get update -qq && ${sudo}env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends ${missing.join(' ')}`);
}
