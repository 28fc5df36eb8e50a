#!/usr/bin/env node
// Runs one TypeScript file (benchmarks, scripts) through tsx's ESM loader.
import { register } from 'tsx/esm/api';
import { pathToFileURL } from 'node:url';
import { resolve } from 'node:path';

register();
const file = process.argv[2];
if (!file) {
  console.error('usage: run-ts.js FILE.ts [args...]');
  process.exit(2);
}
process.argv.splice(1, 1);
await import(pathToFileURL(resolve(file)).href);
