/**
 * Domain errors. Lower layers throw these with enough context (file, line, key path, option) for the top level to
 * print one line and exit; numeric kernels never print or exit.
 */

/** Where in a text file: 1-based line and column. */
export interface TextPosition {
  line: number;
  col: number;
}

/** The received value for a message: JSON, cut to a short excerpt. */
function shortValue(v: unknown): string {
  let text: string;
  try {
    text = JSON.stringify(v) ?? String(v);
  } catch {
    text = String(v);
  }
  return text.length > 80 ? `${text.slice(0, 80)}\u2026` : text;
}

/**
 * A campaign-file problem: names the key path, the rule and the value received, and (when the text was parsed from
 * a file) the line and column, as `file:line:col: key.path: rule (got value)`.
 */
export class ConfigError extends Error {
  constructor(
    readonly file: string,
    readonly keyPath: string,
    readonly rule: string,
    readonly received?: unknown,
    readonly position?: TextPosition,
  ) {
    super(
      `${file}${position ? `:${position.line}:${position.col}` : ''}: ${keyPath ? `${keyPath}: ` : ''}${rule}` +
        (received === undefined ? '' : ` (got ${shortValue(received)})`),
    );
    this.name = 'ConfigError';
  }
}

/** Several campaign-file problems found at once (every schema error, not only the first): one line each. */
export class ConfigErrors extends ConfigError {
  constructor(
    file: string,
    readonly problems: ConfigError[],
  ) {
    super(file, '', `${problems.length} problems in the campaign file:\n${problems.map((p) => `  ${p.message}`).join('\n')}`);
    this.name = 'ConfigErrors';
  }
}

/**
 * An output-folder problem: the target exists and was not made by wakeplane, a name is unsafe, or a folder cannot be
 * replaced. Names the folder; nothing has been renamed, replaced or deleted when it is thrown.
 */
export class OutputError extends Error {
  constructor(
    readonly path: string,
    readonly reason: string,
  ) {
    super(`${path}: ${reason}`);
    this.name = 'OutputError';
  }
}

/** A data-file problem that stops the run (for example a missing required column). */
export class InputError extends Error {
  constructor(
    readonly file: string,
    readonly line: number | undefined,
    readonly reason: string,
  ) {
    super(`${file}${line !== undefined ? `:${line}` : ''}: ${reason}`);
    this.name = 'InputError';
  }
}

/** A command-line option problem. */
export class OptionError extends Error {
  constructor(
    readonly option: string,
    reason: string,
  ) {
    super(`option --${option}: ${reason}`);
    this.name = 'OptionError';
  }
}

/** A geometry that cannot be computed (parallel beams, a target behind the instrument, ...). */
export class GeometryError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'GeometryError';
  }
}

/** Several problems found at once by a check of the inputs (each one line, naming its file, key or folder). */
export class Problems extends Error {
  constructor(readonly problems: Error[]) {
    super(problems.length === 1 ? problems[0].message : `${problems.length} problems:\n${problems.map((p) => `  ${p.message.replace(/\n/g, '\n  ')}`).join('\n')}`);
    this.name = 'Problems';
  }
}

/** A partial result of a sharded run that cannot be merged, or a shard that failed: one line naming the file. */
export class PartialError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'PartialError';
  }
}
