/**
 * Domain errors. Lower layers throw these with enough context (file, line, key path, option) for the top level to
 * print one line and exit; numeric kernels never print or exit.
 */

/** A campaign-file problem: names the key path, the rule and the value received. */
export class ConfigError extends Error {
  constructor(
    readonly file: string,
    readonly keyPath: string,
    readonly rule: string,
    readonly received?: unknown,
  ) {
    super(
      `${file}: ${keyPath ? `${keyPath}: ` : ''}${rule}` +
        (received === undefined ? '' : ` (got ${JSON.stringify(received)?.slice(0, 120)})`),
    );
    this.name = 'ConfigError';
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
