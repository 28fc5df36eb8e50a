#!/usr/bin/env node
// The bare pass: stream the given files with 1 MiB reads and count line feeds (0x0A). Prints JSON
// {files, bytes, newlines, seconds} on stdout. The floor any CSV reader is measured against.
//   default  Buffer.indexOf, a native byte search (memchr): the fastest way Node has to find line feeds
//   --loop   a JavaScript loop looking at every byte, the pass a reader written in JavaScript cannot beat
import { createReadStream } from 'node:fs';

const loop = process.argv[2] === '--loop';
const files = process.argv.slice(loop ? 3 : 2);
const t0 = process.hrtime.bigint();
let bytes = 0, newlines = 0;
for (const f of files) {
  for await (const chunk of createReadStream(f, { highWaterMark: 1 << 20 })) {
    bytes += chunk.length;
    if (loop) {
      let n = 0;
      for (let i = 0; i < chunk.length; i++) if (chunk[i] === 10) n++;
      newlines += n;
    } else {
      let i = -1;
      while ((i = chunk.indexOf(10, i + 1)) !== -1) newlines++;
    }
  }
}
const seconds = Number(process.hrtime.bigint() - t0) / 1e9;
console.log(JSON.stringify({ files: files.length, bytes, newlines, seconds }));
