#!/usr/bin/env node
// Entry point: loads the TypeScript sources through tsx's ESM loader, then runs the CLI.
import { register } from 'tsx/esm/api';

register();
const { main } = await import('../src/cli/main.ts');
await main(process.argv.slice(2));
