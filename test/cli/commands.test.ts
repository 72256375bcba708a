// Every registered command: --help, unknown options and missing files (one line, exit 2); and
// `loopwright export` end to end through the CLI.

import { describe, expect, it } from 'vitest';
import { COMMANDS } from '../../language/src/cli/commands';
import { parsePeriod } from '../../language/src/cli/export';
import { cli } from './fake-io';

const OVEN = 'samples/oven.loop';

describe('every command', () => {
  it('has help that starts with its usage line', async () => {
    expect(COMMANDS.map((c) => c.name)).toEqual(expect.arrayContaining(['sweep', 'export']));
    for (const c of COMMANDS) {
      const r = await cli([c.name, '--help']);
      expect(r.code, c.name).toBe(0);
      expect(r.out.startsWith(`loopwright ${c.name} `), c.name).toBe(true);
      expect(r.out, c.name).toMatch(/Exit status/);
    }
    const top = await cli(['--help']);
    for (const c of COMMANDS) expect(top.out).toContain(`  ${c.name}`);
  });

  it('answers an unknown option and a missing file with one line and exit 2', async () => {
    for (const c of COMMANDS) {
      const needs = c.name === 'export' ? ['--controller', 'X'] : c.name === 'linearize' ? ['--loop', 'X'] : [];
      const bad = await cli([c.name, OVEN, '--no-such-option', ...needs]);
      expect(bad.code, c.name).toBe(2);
      expect(bad.io.stderr, c.name).toHaveLength(1);
      expect(bad.err, c.name).toMatch(new RegExp(`^loopwright ${c.name}: .*--no-such-option`));
      const missing = await cli([c.name, 'nowhere.loop', ...needs]);
      expect(missing.code, c.name).toBe(2);
      expect(missing.io.stderr, c.name).toHaveLength(1);
      expect(missing.err, c.name).toMatch(/nowhere\.loop/);
    }
  });
});

describe('loopwright export', () => {
  it('writes C for the oven heater to stdout, naming period, units and the cautions', async () => {
    const r = await cli(['export', OVEN, '--controller', 'Heater', '--lang', 'c']);
    expect(r.code).toBe(0);
    expect(r.err).toBe('');
    expect(r.out).toContain('Sample period: 1.0 s');
    expect(r.out).toContain('void heater_step(heater_state *s, const heater_inputs *in, heater_outputs *out)');
    expect(r.out).toMatch(/double err; \/\* err in \[K\] \*\//);
    expect(r.out).toMatch(/double heat; \/\* heat in \[W\] \*\//);
    expect(r.out).toMatch(/interlocks and emergency stops belong in hardware/);
    expect(r.out).toMatch(/lw_clamp\(v\d+, 0\.0, 1200\.0\)/); // the heater limit 0 .. max power
  });

  it('exports a continuous controller with --period, to a file with --out', async () => {
    const r = await cli(['export', 'samples/reel.loop', '--controller', 'Current', '--period', '100 [us]', '--method', 'hold', '--out', 'current.c']);
    expect(r.code).toBe(0);
    expect(r.out).toBe('wrote current.c: Current sampled every 0.0001 s by hold; call current_init() once, then current_step() every period');
    const code = r.io.written.get('current.c')!;
    expect(code).toContain('Sample period: 0.0001 s (100 [us]), given when exporting.');
    expect(code).toContain('zero-order hold');
  });

  it('refuses with one line: continuous without a period, unknown controller, plant, bad period, unwritable output', async () => {
    const cases: Array<[string[], RegExp, number]> = [
      [['export', 'samples/reel.loop', '--controller', 'Speed'], /^loopwright export: controller 'Speed' is continuous: give --period/, 1],
      [['export', 'samples/reel.loop', '--controller', 'Reel'], /'Reel' is a plant/, 1],
      [['export', 'samples/reel.loop', '--controller', 'Nope'], /has no controller named 'Nope' \(it has Speed, Current\)/, 2],
      [['export', 'samples/reel.loop', '--controller', 'Speed', '--period', '10'], /--period '10' needs a unit/, 2],
      [['export', 'samples/reel.loop', '--controller', 'Speed', '--period', '10 [m]'], /is not a time/, 2],
      [['export', 'samples/reel.loop', '--controller', 'Speed', '--period', '-1ms'], /must be positive/, 2],
      [['export', 'samples/reel.loop', '--controller', 'Speed', '--method', 'euler', '--period', '1ms'], /--method must be one of tustin, hold, forward/, 2],
      [['export', 'samples/reel.loop', '--controller', 'Speed', '--lang', 'rust', '--period', '1ms'], /--lang rust is not supported/, 2],
      [['export', 'samples/reel.loop'], /give --controller NAME/, 2],
      [['export', OVEN, '--controller', 'Heater', '--out', '/nonexistent/x.c'], /cannot write \/nonexistent\/x\.c: ENOENT/, 2],
    ];
    for (const [argv, re, code] of cases) {
      const r = await cli(argv);
      expect(r.code, argv.join(' ')).toBe(code);
      expect(r.io.stderr, argv.join(' ')).toHaveLength(1);
      expect(r.err, argv.join(' ')).toMatch(re);
    }
    const broken = await cli(['export', 'bad.loop', '--controller', 'C'], { 'bad.loop': 'controller C {\n  input e [m]\n  output y [N] = e\n  sample every 1 [ms]\n}\n' });
    expect(broken.code).toBe(1);
    expect(broken.err).toMatch(/bad\.loop:3:\d+: error LW303/);
    expect(broken.io.stderr.at(-1)).toBe('loopwright export: bad.loop has 1 error; nothing exported');
  });

  it('reads periods with and without brackets', () => {
    expect(parsePeriod('10ms')).toEqual({ ok: true, seconds: 0.01 });
    expect(parsePeriod('10 [ms]')).toEqual({ ok: true, seconds: 0.01 });
    expect(parsePeriod('0.5 s')).toEqual({ ok: true, seconds: 0.5 });
    expect(parsePeriod('2 [min]')).toEqual({ ok: true, seconds: 120 });
    expect(parsePeriod('ten ms').ok).toBe(false);
  });
});
