#!/usr/bin/env node
// The bare pass: stream the given files with 1 MiB reads and count line feeds (0x0A). Prints JSON
// {files, bytes, newlines, seconds} on stdout. The floor any CSV reader is measured against.
import { createReadStream } from 'node:fs';

const files = process.argv.slice(2);
const t0 = process.hrtime.bigint();
let bytes = 0, newlines = 0;
for (const f of files) {
  for await (const chunk of createReadStream(f, { highWaterMark: 1 << 20 })) {
    bytes += chunk.length;
    let i = -1;
    while ((i = chunk.indexOf(10, i + 1)) !== -1) newlines++;
  }
}
const seconds = Number(process.hrtime.bigint() - t0) / 1e9;
console.log(JSON.stringify({ files: files.length, bytes, newlines, seconds }));
