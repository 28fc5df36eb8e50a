/**
 * The partial-result file of a sharded run (`.wpart`): a documented, versioned container of records, each a JSON
 * description followed by named typed arrays, written as a stream (bounded memory: each finished window is
 * appended and forgotten) and read back by random access (the merge reads one window of every partial at a time).
 *
 * Layout (all integers little-endian):
 *   bytes 0-15   magic "WAKEPLANE-PART\n" + the format version as one byte (PARTIAL_FORMAT)
 *   records      each: u32 length L of the JSON text, u32 0, L bytes of UTF-8 JSON, zero padding to a multiple of 8;
 *                then for every entry of the JSON's "arrays" list ([name, type, length], type one of the
 *                TypedArray constructor names) its length * element-size bytes, zero padding to a multiple of 8
 *   trailer      the last 16 bytes: the byte offset of the index record as a u64, then "WPEND\0\0\0"
 * Non-finite numbers in the JSON are written as {"$num": "NaN" | "Infinity" | "-Infinity"}.
 * The index record (JSON "type": "index") lists every other record's offset; its content is up to the writer
 * (pipeline/partial.ts describes what a shard writes). A file without its trailer is an unfinished partial.
 */
import { closeSync, fstatSync, openSync, readSync, renameSync, rmSync, writeSync } from 'node:fs';
import { endianness } from 'node:os';
import type { TypedArray } from '../grid/accumulatorState.ts';
import { removeOnInterrupt } from './cleanup.ts';

/**
 * Format of the files this build writes and reads. 3: the accumulator's layout without its scratch array (the
 * uncertainty budget's per-sample path, grid/accumulator.ts); 2: the burst sums of the sampling term.
 */
export const PARTIAL_FORMAT = 3;
const MAGIC = Buffer.from('WAKEPLANE-PART\n\0', 'latin1');
MAGIC[15] = PARTIAL_FORMAT;
const END = Buffer.from('WPEND\0\0\0', 'latin1');

if (endianness() !== 'LE') throw new Error('partial files are written on little-endian machines only');

const CTORS: Record<string, new (b: ArrayBuffer, o: number, n: number) => TypedArray> = {
  Float64Array, Float32Array, Int32Array, Uint32Array, Int16Array, Uint16Array, Int8Array, Uint8Array,
};

function encode(v: unknown): string {
  return JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? { $num: String(x) } : x));
}
function decode(text: string): unknown {
  return JSON.parse(text, (_k, x) => (x && typeof x === 'object' && !Array.isArray(x) && typeof x.$num === 'string' && Object.keys(x).length === 1 ? Number(x.$num) : x));
}

export interface PartialRecord {
  meta: Record<string, unknown>;
  arrays: Record<string, TypedArray>;
}

const pad8 = (n: number) => (8 - (n % 8)) % 8;
const ZEROS = Buffer.alloc(8);

/** Appends records to a new file; `close(index)` writes the index record and the trailer and renames into place. */
export class PartialWriter {
  private fd: number;
  private pos = 0;
  /** Where the file is written until close() renames it (a reader may follow the records there). */
  readonly tmp: string;
  /** Unregisters the temporary name from removal on SIGINT/SIGTERM (io/cleanup.ts) once it is renamed or removed. */
  private readonly unregister: () => void;
  constructor(readonly path: string) {
    this.tmp = `${path}.writing-${process.pid}`;
    this.fd = openSync(this.tmp, 'w');
    this.unregister = removeOnInterrupt(this.tmp);
    this.put(MAGIC);
  }

  private put(b: Uint8Array): void {
    let o = 0;
    while (o < b.length) o += writeSync(this.fd, b, o, b.length - o, this.pos + o);
    this.pos += b.length;
  }

  /** Writes one record; returns its offset. */
  write(meta: Record<string, unknown>, arrays: Record<string, TypedArray> = {}): number {
    const at = this.pos;
    const list = Object.entries(arrays).map(([n, a]) => [n, a.constructor.name, a.length]);
    for (const [n, t] of list) if (!CTORS[t as string]) throw new TypeError(`partial record: array "${n}" of unsupported type ${t}`);
    const json = Buffer.from(encode({ ...meta, arrays: list }), 'utf8');
    const head = Buffer.alloc(8);
    head.writeUInt32LE(json.length, 0);
    this.put(head);
    this.put(json);
    this.put(ZEROS.subarray(0, pad8(json.length)));
    for (const a of Object.values(arrays)) {
      const bytes = new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
      this.put(bytes);
      this.put(ZEROS.subarray(0, pad8(bytes.length)));
    }
    return at;
  }

  /** Writes the index record and the trailer, then makes the file visible under its name. */
  close(index: Record<string, unknown>): void {
    const at = this.write({ ...index, type: 'index' });
    const t = Buffer.alloc(16);
    t.writeBigUInt64LE(BigInt(at), 0);
    END.copy(t, 8);
    this.put(t);
    closeSync(this.fd);
    renameSync(this.tmp, this.path);
    this.unregister();
  }

  /** Stops writing and leaves no file. */
  abort(): void {
    try { closeSync(this.fd); } catch { /* closed */ }
    try { rmSync(this.tmp, { force: true }); } catch { /* gone */ }
    this.unregister();
  }
}

/** A partial file opened for reading; `problem` says in one phrase why a file is not a complete partial. */
export class PartialReader {
  private readonly fd: number;
  readonly index: Record<string, unknown>;
  readonly format: number;
  private constructor(readonly path: string, fd: number, format: number, index: Record<string, unknown>) {
    this.fd = fd;
    this.format = format;
    this.index = index;
  }

  /**
   * Opens a partial that is still being written (its temporary name), to read records at offsets its writer
   * reported; no index. The open file stays readable after the writer renames it.
   */
  static follow(path: string): PartialReader {
    const fd = openSync(path, 'r');
    const head = Buffer.alloc(16);
    if (readSync(fd, head, 0, 16, 0) !== 16 || head.compare(MAGIC) !== 0) {
      closeSync(fd);
      throw new Error('not a wakeplane partial result');
    }
    return new PartialReader(path, fd, head[15], {});
  }

  /** Opens a partial; throws an Error whose message (without the path) says what is wrong. */
  static open(path: string): PartialReader {
    const fd = openSync(path, 'r');
    try {
      const size = fstatSync(fd).size;
      const head = Buffer.alloc(16);
      if (size < 32 || readSync(fd, head, 0, 16, 0) !== 16 || head.subarray(0, 15).compare(MAGIC, 0, 15) !== 0) throw new Error('not a wakeplane partial result');
      const format = head[15];
      if (format !== PARTIAL_FORMAT) throw new Error(`partial format ${format}${format < PARTIAL_FORMAT ? ' (written by an older wakeplane)' : ''}, this wakeplane reads format ${PARTIAL_FORMAT}: run the shard again with this wakeplane`);
      const tail = Buffer.alloc(16);
      readSync(fd, tail, 0, 16, size - 16);
      if (tail.subarray(8).compare(END) !== 0) throw new Error('unfinished partial result (no trailer: its shard did not complete)');
      const at = Number(tail.readBigUInt64LE(0));
      const r = new PartialReader(path, fd, format, {});
      const idx = r.read(at).meta;
      if (idx.type !== 'index') throw new Error('damaged partial result (its index record is missing)');
      (r as { index: Record<string, unknown> }).index = idx;
      return r;
    } catch (e) {
      closeSync(fd);
      throw e;
    }
  }

  private bytes(at: number, n: number): Buffer {
    const b = Buffer.alloc(n);
    let o = 0;
    while (o < n) {
      const got = readSync(this.fd, b, o, n - o, at + o);
      if (got === 0) throw new Error('damaged partial result (a record runs past the end of the file)');
      o += got;
    }
    return b;
  }

  /** The record at byte offset `at`. */
  read(at: number): PartialRecord {
    const head = this.bytes(at, 8);
    const len = head.readUInt32LE(0);
    const meta = decode(this.bytes(at + 8, len).toString('utf8')) as Record<string, unknown>;
    let pos = at + 8 + len + pad8(len);
    const arrays: Record<string, TypedArray> = {};
    for (const [name, type, length] of (meta.arrays as [string, string, number][]) ?? []) {
      const C = CTORS[type];
      if (!C) throw new Error(`damaged partial result (array type ${type})`);
      const size = (C as unknown as { BYTES_PER_ELEMENT: number }).BYTES_PER_ELEMENT * length;
      const b = this.bytes(pos, size);
      arrays[name] = new C(b.buffer as ArrayBuffer, b.byteOffset, length);
      pos += size + pad8(size);
    }
    delete meta.arrays;
    return { meta, arrays };
  }

  close(): void {
    closeSync(this.fd);
  }
}
