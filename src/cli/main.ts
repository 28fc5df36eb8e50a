/**
 * Command-line entry. yargs lives only here; handlers call library functions; only this file exits. Errors print one
 * line naming the file, line, key or option at fault; --debug prints the stack as well.
 */
import yargs from 'yargs';
import { hideBin } from 'yargs/helpers';
import { ConfigError, GeometryError, InputError, OptionError } from '../errors.ts';
import { VERSION } from '../version.ts';
import { commands } from './commands.ts';

export async function main(argv: string[]): Promise<void> {
  const debug = argv.includes('--debug');
  try {
    await commands(yargs(argv).scriptName('wakeplane').version(VERSION))
      .option('debug', { type: 'boolean', default: false, describe: 'print the stack trace of an error' })
      .demandCommand(1, 'name a command (see --help)')
      .strict()
      .recommendCommands()
      .fail((msg, err) => {
        if (err) throw err;
        throw new OptionError('usage', msg);
      })
      .help()
      .wrap(Math.min(110, process.stdout.columns || 110))
      .parseAsync();
  } catch (e) {
    const err = e as Error;
    const known = err instanceof ConfigError || err instanceof InputError || err instanceof OptionError || err instanceof GeometryError;
    const text = err instanceof OptionError && err.option === 'usage' ? err.message.replace(/^option --usage: /, '') : err.message;
    process.stderr.write(`wakeplane: ${known ? '' : 'error: '}${text}\n`);
    if (debug) process.stderr.write(`${err.stack}\n`);
    else if (!known) process.stderr.write('(run again with --debug for the stack trace)\n');
    process.exitCode = 1;
  }
}

void hideBin;
