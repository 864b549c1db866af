#!/usr/bin/env node
// Command-line entry: runs the TypeScript CLI through tsx so the core is shared as source.
import { register } from 'tsx/esm/api';
register();
const { main } = await import('../cli/main.ts');
process.exitCode = await main(process.argv.slice(2));
