/**
 * Command-line entry. yargs lives only here; handlers call library functions; only this file exits. Errors print one
 * line naming the file, line, key or option at fault (several lines when several problems are found at once);
 * --debug prints the stack as well. Exit codes: 0 done, 1 an error, 130/143 interrupted by SIGINT/SIGTERM.
 */
import yargs from 'yargs';
import { ConfigError, GeometryError, InputError, OptionError, OutputError, PartialError, Problems } from '../errors.ts';
import { VERSION } from '../version.ts';
import { COMMAND_NAMES, HIDDEN_COMMANDS, commands } from './commands.ts';
import { installSignalHandlers } from './signals.ts';

/** The first argument that is not an option (the command), or undefined. */
function commandOf(argv: string[]): string | undefined {
  return argv.find((a) => !a.startsWith('-'));
}

/**
 * The POSIX end of options: every word after "--" is an argument, even one starting with a dash (a file named
 * "-x.yaml"). yargs never fills positionals from words after "--", so they are passed on as paths that cannot be
 * read as options ("./-x.yaml", the same file) and the "--" is dropped.
 */
export function endOfOptions(argv: string[]): string[] {
  const at = argv.indexOf('--');
  if (at < 0) return argv;
  return [...argv.slice(0, at), ...argv.slice(at + 1).map((a) => (a.startsWith('-') ? `./${a}` : a))];
}

export async function main(argvGiven: string[], opts: { signals?: boolean } = {}): Promise<void> {
  const argv = endOfOptions(argvGiven);
  const debug = argv.includes('--debug');
  if (opts.signals !== false) installSignalHandlers();
  try {
    const cmd = commandOf(argv);
    if (cmd !== undefined && !COMMAND_NAMES.includes(cmd) && !HIDDEN_COMMANDS.includes(cmd)) {
      throw new OptionError('usage', `unknown command ${JSON.stringify(cmd.slice(0, 40))}; the commands are: ${COMMAND_NAMES.join(', ')} (wakeplane --help)`);
    }
    await commands(yargs(argv).scriptName('wakeplane').version(VERSION))
      .option('debug', { type: 'boolean', default: false, describe: 'print the stack trace of an error' })
      .demandCommand(1, `name a command: ${COMMAND_NAMES.join(', ')} (wakeplane --help)`)
      .strict()
      .fail((msg, err) => {
        if (err) throw err;
        throw new OptionError('usage', msg);
      })
      .help()
      .alias('h', 'help')
      .alias('version', 'V')
      .exitProcess(false)
      .wrap(Math.min(110, process.stdout.columns || 110))
      .parseAsync();
  } catch (e) {
    const err = e as Error;
    const known =
      err instanceof ConfigError || err instanceof InputError || err instanceof OptionError || err instanceof GeometryError ||
      err instanceof OutputError || err instanceof Problems || err instanceof PartialError;
    const text = err instanceof OptionError && err.option === 'usage' ? err.message.replace(/^option --usage: /, '') : err.message;
    process.stderr.write(`wakeplane: ${known ? '' : 'error: '}${text}\n`);
    if (debug) process.stderr.write(`${err.stack}\n`);
    else if (!known) process.stderr.write('(run again with --debug for the stack trace)\n');
    process.exitCode = 1;
  }
}
