/**
 * The careful path for one sample row: quoted fields, spaces around values, exponents, long numbers, and every row
 * the fast path declines. It decides the one rejection reason of a bad row, checking in a fixed order:
 * field count; then each field in the order time, instrument, azimuth, elevation, range, radial velocity, CNR
 * (empty -> missing_field, unparsable -> bad_time / unknown_instrument / bad_number); then the value checks
 * azimuth in [-360, 720] and elevation in [-90, 90] (angle_out_of_range), range > 0 (bad_range).
 * Accepted values are in SI units with the column scale/offset and the sign convention applied, azimuth normalised
 * into [0, 360).
 */
import type { RejectReason } from '../qc/reasons.ts';
import { excerpt } from './excerpt.ts';
import { DECIMAL_TEXT, parseDecimal, parseIsoBytes, parsedTo, type DayCache } from './fastParse.ts';
import { R_AZ, R_CNR, R_EL, R_INST, R_RANGE, R_TIME, R_VR, ROLE_KEYS, type ColumnLayout } from './sampleColumns.ts';

/** One row's values (scratch, overwritten per row). */
export interface RowValues {
  time: number;
  instrument: number;
  azimuth: number;
  elevation: number;
  range: number;
  radialVelocity: number;
  cnr: number;
}

export interface RowProblem {
  reason: RejectReason;
  detail: string;
  /** Index of the instrument the row names, when that field could be read (the row is charged to it). */
  instrument?: number;
}

export interface RowContext {
  layout: ColumnLayout;
  instrumentIndex: Map<string, number>;
  owner: number;
  days: DayCache;
}

interface Field {
  b: Uint8Array;
  s: number;
  e: number;
}

const dec = new TextDecoder();

function isSpace(c: number): boolean {
  return c === 32 || c === 9;
}

/** Fields of the line [s, e) (no line break), trimmed of spaces and tabs; null for an unterminated quote. */
function splitFields(buf: Uint8Array, s: number, e: number): Field[] | null {
  const out: Field[] = [];
  if (buf.subarray(s, e).indexOf(34) < 0) {
    let a = s;
    for (let i = s; i <= e; i++) {
      if (i === e || buf[i] === 44) {
        out.push({ b: buf, s: a, e: i });
        a = i + 1;
      }
    }
  } else {
    const text = dec.decode(buf.subarray(s, e));
    let cur = '', q = false;
    const push = () => {
      const b = Buffer.from(cur, 'utf8'); // a Buffer like the fast path's, so the parsers stay monomorphic
      out.push({ b, s: 0, e: b.length });
      cur = '';
    };
    for (let i = 0; i < text.length; i++) {
      const ch = text[i];
      if (q) {
        if (ch === '"' && text[i + 1] === '"') { cur += '"'; i++; }
        else if (ch === '"') q = false;
        else cur += ch;
      } else if (ch === '"') q = true;
      else if (ch === ',') push();
      else cur += ch;
    }
    if (q) return null;
    push();
  }
  for (const f of out) {
    while (f.s < f.e && isSpace(f.b[f.s])) f.s++;
    while (f.e > f.s && isSpace(f.b[f.e - 1])) f.e--;
  }
  return out;
}

function text(f: Field): string {
  return dec.decode(f.b.subarray(f.s, f.e));
}

/** A decimal number filling the whole field; NaN when it is not one (or not finite). */
export function parseNumberField(b: Uint8Array, s: number, e: number): number {
  const v = parseDecimal(b, s, e);
  if (v === v && parsedTo() === e) return v;
  const t = dec.decode(b.subarray(s, e));
  if (!DECIMAL_TEXT.test(t)) return NaN;
  const x = Number(t);
  return Number.isFinite(x) ? x : NaN;
}

/** A time filling the whole field: ISO 8601 (see parseIsoBytes) or Unix seconds; NaN when neither. */
export function parseTimeField(b: Uint8Array, s: number, e: number, days: DayCache): number {
  if (e - s >= 16 && b[s + 4] === 45) {
    const t = parseIsoBytes(b, s, e, days);
    return t === t && parsedTo() === e ? t : NaN;
  }
  return parseNumberField(b, s, e);
}

/** Normalises an azimuth in degrees into [0, 360). */
export function wrap360(az: number): number {
  let a = az % 360;
  if (a < 0) a += 360;
  return a >= 360 || a === 0 ? 0 : a; // also turns -0 into 0
}

const problem = (reason: RejectReason, detail: string): RowProblem => ({ reason, detail });

/**
 * Parses the row [s, e) of `buf` (no line break) into `out`; returns null when the row is accepted, else its
 * rejection reason and a human detail.
 */
export function parseRowSlow(buf: Uint8Array, s: number, e: number, ctx: RowContext, out: RowValues): RowProblem | null {
  const fields = splitFields(buf, s, e);
  const p = checkFields(fields, ctx, out);
  if (p !== null && fields !== null) {
    // charge the row to the instrument it names, when that field can be read
    const c = ctx.layout.colOf[R_INST];
    const f = c >= 0 ? fields[c] : undefined;
    const k = f && f.e > f.s ? ctx.instrumentIndex.get(text(f)) : undefined;
    if (k !== undefined) p.instrument = k;
  }
  return p;
}

function checkFields(fields: Field[] | null, ctx: RowContext, out: RowValues): RowProblem | null {
  const L = ctx.layout;
  if (fields === null) return problem('missing_field', 'unterminated quoted field');
  if (fields.length < L.needed) {
    return problem('missing_field', `${fields.length} field(s), the header needs at least ${L.needed}`);
  }
  const name = (r: number) => L.header[L.colOf[r]];
  const si = (r: number, v: number) => v * L.scale[r] + L.offset[r];

  const ft = fields[L.colOf[R_TIME]];
  if (ft.s === ft.e) return problem('missing_field', `column "${name(R_TIME)}" is empty`);
  const iso = ft.e - ft.s >= 16 && ft.b[ft.s + 4] === 45;
  const t = parseTimeField(ft.b, ft.s, ft.e, ctx.days);
  if (!Number.isFinite(t)) return problem('bad_time', `column "${name(R_TIME)}": not a time: ${excerpt(text(ft))}`);
  out.time = iso ? t + L.offset[R_TIME] : si(R_TIME, t);

  if (L.colOf[R_INST] >= 0) {
    const fi = fields[L.colOf[R_INST]];
    if (fi.s === fi.e) return problem('missing_field', `column "${name(R_INST)}" is empty`);
    const id = text(fi);
    const k = ctx.instrumentIndex.get(id);
    if (k === undefined) return problem('unknown_instrument', `instrument ${excerpt(id, 40)} is not in the campaign`);
    out.instrument = k;
  } else out.instrument = ctx.owner;

  const vals = [NaN, NaN, NaN, NaN, NaN, NaN, NaN];
  for (const r of [R_AZ, R_EL, R_RANGE, R_VR, R_CNR]) {
    const c = L.colOf[r];
    if (c < 0) continue;
    const f = fields[c];
    if (f.s === f.e) {
      if (r === R_CNR) continue;
      return problem('missing_field', `column "${name(r)}" (${ROLE_KEYS[r]}) is empty`);
    }
    const v = parseNumberField(f.b, f.s, f.e);
    if (v !== v) return problem('bad_number', `column "${name(r)}" (${ROLE_KEYS[r]}): not a number: ${excerpt(text(f))}`);
    vals[r] = si(r, v);
  }
  const az = vals[R_AZ], el = vals[R_EL], rg = vals[R_RANGE];
  if (!(az >= -360 && az <= 720)) return problem('angle_out_of_range', `azimuth ${az} deg outside [-360, 720]`);
  if (!(el >= -90 && el <= 90)) return problem('angle_out_of_range', `elevation ${el} deg outside [-90, 90]`);
  if (!(rg > 0 && rg < Infinity)) return problem('bad_range', `range ${rg} m is not positive and finite`);
  if (!Number.isFinite(vals[R_VR])) return problem('bad_number', `radial velocity ${vals[R_VR]} is not finite after scaling`);
  out.azimuth = wrap360(az);
  out.elevation = el;
  out.range = rg;
  out.radialVelocity = vals[R_VR];
  out.cnr = vals[R_CNR];
  return null;
}
