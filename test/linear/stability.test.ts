// LW604: a loop whose linearized closed loop has a pole right of the imaginary axis.
// References: a first-order plant x' = a·x + u under u = −k·x has its one pole at a − k (the
// solution is x0·e^((a−k)t); common practice). The boom of samples/boom.loop under a PD law:
// the hinge's gravity stiffness is m·g·l = 0.9·9.80665·0.6 = 5.296 N·m/rad, so a proportional
// gain below it cannot hold the boom upright (the constant term of the characteristic
// polynomial, kp − m·g·l, is negative: Routh–Hurwitz; common practice). Its real root, 0.93904 s⁻¹,
// is that of I(s² + (c/I)s − g/l)(1 + s/wf) + kp(1 + s/wf) + kd·s = 0 with kp = 3, kd = 2.2,
// wf = 25 (numpy.roots, Debian python3-numpy, run once by hand; the other two roots are
// −13.0004 ± 4.4291j).

import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import { checkLoopStability } from '../../language/src/linear/stability';

const tank = (a: number, k: number) => `plant Tank {
  state level [m]
  input inflow [m/s]
  output y [m] = level
  level' = ${a} [1/s] * level + inflow
  operating point rest { level = 0 [m], inflow = 0 [m/s] }
}
controller Gain {
  input e [m]
  output u [m/s]
  u / e = ${k} [1/s]
}
loop Hold {
  signal target = 0 [m]
  target - Tank.y -> Gain.e
  Gain.u -> Tank.inflow
  around Tank.rest
  simulate 1 [s]
}
`;

describe('LW604 closed loop unstable at the operating point', () => {
  it('a first-order loop with its pole at a − k = 1 rad/s: the warning on the around member names the pole', () => {
    const text = tank(2, 1);
    const d = checkLoopStability(analyze(text));
    expect(d).toHaveLength(1);
    expect(d[0].code).toBe('LW604');
    expect(d[0].severity).toBe('warning');
    expect(text.slice(d[0].span.start, d[0].span.end)).toBe('around Tank.rest');
    expect(d[0].message).toBe('the closed loop Hold, linearized at Tank.rest, is unstable: a pole right of the imaginary axis (1 rad/s); small motions about this point grow');
  });

  it('the same loop with the pole at a − k = −1 rad/s, or exactly on the axis (a = k), is not warned about', () => {
    expect(checkLoopStability(analyze(tank(2, 3)))).toEqual([]);
    expect(checkLoopStability(analyze(tank(2, 2)))).toEqual([]);
  });

  it('the boom with a proportional gain below its gravity stiffness (3 < 5.296 N·m/rad) is unstable; with 14 it is not', () => {
    const boom = readFileSync('samples/boom.loop', 'utf8');
    expect(checkLoopStability(analyze(boom))).toEqual([]);
    const weak = checkLoopStability(analyze(boom.replace('param kp = 14 [N*m/rad]', 'param kp = 3 [N*m/rad]')));
    expect(weak.map((x) => x.code)).toEqual(['LW604']);
    expect(weak[0].message).toMatch(/a pole right of the imaginary axis \(0\.939 rad\/s\)/);
  });

  it('without around: the warning goes on the loop name and says which point was used', () => {
    const text = tank(2, 1).replace('  around Tank.rest\n', '');
    const d = checkLoopStability(analyze(text));
    expect(d.map((x) => text.slice(x.span.start, x.span.end))).toEqual(['Hold']);
    expect(d[0].message).toContain("linearized at its plants' first operating points, is unstable");
  });

  it('a loop with an error in it is skipped, and no sample is warned about', () => {
    expect(checkLoopStability(analyze(tank(2, 1).replace('simulate 1 [s]', 'simulate 1 [s]\n  show Nowhere.x')))).toEqual([]);
    for (const f of readdirSync('samples').filter((n) => n.endsWith('.loop'))) {
      expect(checkLoopStability(analyze(readFileSync(join('samples', f), 'utf8'))), f).toEqual([]);
    }
  });
});
