// In-process entry of the CLI, used by main.ts and by the tests.

import { COMMANDS } from './commands';
import { EXIT_USAGE, UsageError, type CliIO } from './types';

export const VERSION = '0.1.0';

function overview(): string {
  const w = Math.max(...COMMANDS.map((c) => c.name.length));
  return [
    'loopwright: check, linearize and simulate plants, controllers and loops in .loop files',
    '',
    'usage: loopwright COMMAND [options]',
    '',
    ...COMMANDS.map((c) => `  ${c.name.padEnd(w)}  ${c.summary}`),
    '',
    "'loopwright COMMAND --help' tells more about a command.",
  ].join('\n');
}

export async function runCli(argv: string[], io: CliIO): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    io.out(overview());
    return name ? 0 : EXIT_USAGE;
  }
  if (name === '--version') {
    io.out(VERSION);
    return 0;
  }
  const cmd = COMMANDS.find((c) => c.name === name);
  if (!cmd) {
    io.err(`loopwright: unknown command '${name}' (commands: ${COMMANDS.map((c) => c.name).join(', ')})`);
    return EXIT_USAGE;
  }
  if (rest.includes('--help') || rest.includes('-h')) {
    io.out(cmd.usage);
    return 0;
  }
  try {
    return await cmd.run(rest, io);
  } catch (err) {
    if (err instanceof UsageError) {
      io.err(`loopwright ${cmd.name}: ${err.message} (see 'loopwright ${cmd.name} --help')`);
      return EXIT_USAGE;
    }
    io.err(`loopwright ${cmd.name}: internal error: ${(err as Error).stack ?? err}`);
    return 70;
  }
}
