/**
 * Turning validation issues into messages a person can act on: every issue at once (not only the first), each with
 * the key path, the YAML line and column where the key or value stands, the value received, and for a misspelt key
 * or enum value the nearest allowed one ("did you mean"). A misspelt key is reported once, as an unknown key with
 * its suggestion, not a second time as the required key that is then missing.
 */
import type { Document, LineCounter } from 'yaml';
import { isMap, isPair, isScalar, isSeq } from 'yaml';
import type { z } from 'zod';
import { ConfigError, type TextPosition } from '../errors.ts';

export type KeyPath = PropertyKey[];

/** Finds the line and column of a key path in the parsed document (the deepest part of it that exists). */
export type Locator = (path: KeyPath, what?: 'key' | 'value') => TextPosition | undefined;

export function keyPathOf(path: KeyPath): string {
  return path.map((p, i) => (typeof p === 'number' ? `[${p}]` : `${i ? '.' : ''}${String(p)}`)).join('');
}

export function valueAt(obj: unknown, path: KeyPath): unknown {
  let cur: unknown = obj;
  for (const p of path) {
    if (cur === null || typeof cur !== 'object') return undefined;
    cur = (cur as Record<PropertyKey, unknown>)[p];
  }
  return cur;
}

/** A locator over a YAML document: the key's position for 'key', the value's for 'value' (the default). */
export function yamlLocator(doc: Document, lc: LineCounter): Locator {
  return (path, what = 'value') => {
    let node: unknown = doc.contents;
    let keyNode: unknown;
    for (const seg of path) {
      if (isMap(node)) {
        const pair = node.items.find((p) => isPair(p) && String(isScalar(p.key) ? p.key.value : p.key) === String(seg));
        if (!pair) break;
        keyNode = pair.key;
        node = pair.value;
      } else if (isSeq(node) && typeof seg === 'number' && seg < node.items.length) {
        keyNode = undefined;
        node = node.items[seg];
      } else break;
    }
    const target = (what === 'key' && keyNode) || node || keyNode;
    const range = (target as { range?: [number, number, number] } | undefined)?.range;
    if (!range) return undefined;
    const p = lc.linePos(range[0]);
    return { line: p.line, col: p.col };
  };
}

/** Levenshtein distance (insert, delete, substitute; each 1). */
export function editDistance(a: string, b: string): number {
  const prev = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let diag = prev[0];
    prev[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const up = prev[j];
      prev[j] = Math.min(prev[j] + 1, prev[j - 1] + 1, diag + (a[i - 1] === b[j - 1] ? 0 : 1));
      diag = up;
    }
  }
  return prev[b.length];
}

/**
 * The allowed word nearest to `word`, or undefined when none is near: compared without case, "_" and "-", a match
 * within a third of the word's length in edits, or one being the other with a unit suffix (hubHeight / hubHeight_m).
 */
export function nearest(word: string, allowed: readonly string[]): string | undefined {
  const norm = (s: string) => s.toLowerCase().replace(/[_-]/g, '');
  const w = norm(word);
  let best: string | undefined, bestD = Infinity;
  for (const a of allowed) {
    if (a === word) continue;
    const n = norm(a);
    let d = editDistance(w, n);
    if (w.length >= 3 && (n.startsWith(w) || w.startsWith(n))) d = Math.min(d, 1);
    if (d < bestD) { bestD = d; best = a; }
  }
  return best !== undefined && bestD <= Math.max(1, Math.floor(w.length / 3)) ? best : undefined;
}

type JsonSchema = { properties?: Record<string, JsonSchema>; items?: JsonSchema; prefixItems?: JsonSchema[]; anyOf?: JsonSchema[]; oneOf?: JsonSchema[]; allOf?: JsonSchema[] };

/** Keys allowed in the object at `path` of a JSON Schema (union branches merged); empty when unknown. */
export function allowedKeys(schema: unknown, path: KeyPath): string[] {
  let nodes: JsonSchema[] = [schema as JsonSchema];
  const expand = (list: JsonSchema[]): JsonSchema[] => list.flatMap((n) => [n, ...expand([...(n.anyOf ?? []), ...(n.oneOf ?? []), ...(n.allOf ?? [])])]);
  for (const seg of path) {
    nodes = expand(nodes).flatMap((n) => {
      if (typeof seg === 'number') return n.prefixItems?.[seg] ? [n.prefixItems[seg]] : n.items ? [n.items] : [];
      const p = n.properties?.[String(seg)];
      return p ? [p] : [];
    });
  }
  return [...new Set(expand(nodes).flatMap((n) => Object.keys(n.properties ?? {})))];
}

type Issue = z.core.$ZodIssue;

/**
 * Flattens union issues into the issues of the branch the author most likely meant: a branch whose `kind` literal
 * matched; when no branch's `kind` matched, one issue at `kind` listing every allowed value; otherwise the branch
 * with the fewest issues.
 */
export function flattenIssues(issues: readonly Issue[], prefix: KeyPath = []): Issue[] {
  const out: Issue[] = [];
  for (const iss of issues) {
    const path = [...prefix, ...(iss.path as KeyPath)];
    if (iss.code !== 'invalid_union' || !('errors' in iss)) {
      out.push({ ...iss, path } as Issue);
      continue;
    }
    const branches = (iss as unknown as { errors: Issue[][] }).errors;
    const kindMiss = (b: Issue[]) => b.some((i) => i.code === 'invalid_value' && i.path.length === 1 && i.path[0] === 'kind');
    const viable = branches.filter((b) => !kindMiss(b));
    if (viable.length === 0 && branches.length > 0) {
      const values = branches.flatMap((b) => b.filter((i) => i.code === 'invalid_value' && i.path[0] === 'kind').flatMap((i) => (i as { values: unknown[] }).values));
      out.push({ code: 'invalid_value', values, path: [...path, 'kind'], message: `expected one of ${values.map((v) => JSON.stringify(v)).join(', ')}`, input: undefined } as unknown as Issue);
      continue;
    }
    const flat = viable.map((b) => flattenIssues(b, path));
    flat.sort((a, b) => a.length - b.length);
    out.push(...(flat[0] ?? []));
  }
  return out;
}

/** Messages for zod's own wording that says less than it could. */
function ruleOf(iss: Issue, received: unknown): string {
  if (iss.code === 'invalid_type' && received === undefined) return `required key missing (${(iss as { expected: string }).expected})`;
  if (iss.code === 'invalid_value') {
    const values = (iss as { values: unknown[] }).values;
    return `expected one of ${values.map((v) => JSON.stringify(v)).join(', ')}`;
  }
  return iss.message;
}

/**
 * Every validation issue as a ConfigError with its position and suggestion, in the order of the file. `schema` is
 * the JSON Schema (for the keys allowed at a path).
 */
export function problemsFromIssues(file: string, raw: unknown, issues: readonly Issue[], schema: unknown, locate?: Locator): ConfigError[] {
  const flat = flattenIssues(issues);
  type P = { err: ConfigError; order: number };
  const out: P[] = [];
  const suggested = new Set<string>(); // key paths named by a "did you mean" (their missing-key issue is dropped)
  const order = (pos?: TextPosition) => (pos ? pos.line * 1e4 + pos.col : 1e12);
  for (const iss of flat) {
    if (iss.code !== 'unrecognized_keys') continue;
    const keys = (iss as { keys: string[] }).keys;
    const allowed = allowedKeys(schema, iss.path as KeyPath);
    for (const key of keys) {
      const path = [...(iss.path as KeyPath), key];
      const near = nearest(key, allowed);
      if (near) suggested.add(keyPathOf([...(iss.path as KeyPath), near]));
      const pos = locate?.(path, 'key');
      const hint = near ? `; did you mean "${near}"?` : allowed.length ? ` (allowed here: ${allowed.join(', ')})` : '';
      out.push({ err: new ConfigError(file, keyPathOf(path), `unknown key${hint}`, undefined, pos), order: order(pos) });
    }
  }
  for (const iss of flat) {
    if (iss.code === 'unrecognized_keys') continue;
    const path = iss.path as KeyPath;
    const received = valueAt(raw, path);
    if (received === undefined && suggested.has(keyPathOf(path))) continue;
    let rule = ruleOf(iss, received);
    if (iss.code === 'invalid_value' && typeof received === 'string') {
      const near = nearest(received, (iss as { values: unknown[] }).values.map(String));
      if (near) rule += `; did you mean "${near}"?`;
    }
    if (path.length === 0 && (received === null || typeof received !== 'object' || Array.isArray(received))) {
      rule = 'the campaign file must be a mapping of keys (name, turbine, instruments, planes, ...)';
    }
    const pos = locate?.(path, received === undefined ? 'key' : 'value');
    out.push({ err: new ConfigError(file, keyPathOf(path), rule, received === undefined || (received !== null && typeof received === 'object') ? undefined : received, pos), order: order(pos) });
  }
  out.sort((a, b) => a.order - b.order);
  return out.map((p) => p.err);
}
