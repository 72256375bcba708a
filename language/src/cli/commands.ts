// The registered commands, in the order `loopwright --help` lists them.

import type { CliCommand } from './types';
import { command as check } from './check';
import { command as simulate } from './simulate';
import { command as linearize } from './linearize';
import { command as exportCommand } from './export';
import { command as sweep } from './sweep';

export const COMMANDS: CliCommand[] = [check, simulate, linearize, sweep, exportCommand];
