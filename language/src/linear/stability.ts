// LW604: a loop whose closed loop, linearized at its operating point (`around`), has a pole right
// of the imaginary axis. Small motions about that point grow, so the nonlinear loop cannot settle
// there either: the warning goes on the `around` member (else the loop's name) and names the
// poles, in rad/s as a linearization shows them.
//
// A loop with an error inside it, or one that cannot be linearized, is skipped: the linearization
// itself says why when asked. A pole counts as unstable as it does in the linearization (real part
// above 1e-9 of the matrix's size, poles.ts); a pole on the axis is not warned about.
//
// API
//   checkLoopStability(analysis) → Diagnostic[]
//   stabilityDiagnostics(analysis) → Diagnostic[]   LW604 as the editor and `check` show it

import type { Analysis } from '../analysis';
import type { Diagnostic } from '../diagnostics';
import { hasErrorInside } from './equilibrium';
import { loopLinear } from './loop-linear';
import { polesOf } from './poles';
import type { PoleInfo } from '../protocol';
import { num } from '../cli/format';

/** `2.5`, `0.3 ± 1.2j` (one entry per conjugate pair), three significant digits. */
function poleText(p: PoleInfo): string {
  return Math.abs(p.im) > 0 ? `${num(p.re, 3)} ± ${num(Math.abs(p.im), 3)}j` : num(p.re, 3);
}

/** LW604 on every loop whose linearized closed loop is unstable. Never throws. */
export function checkLoopStability(analysis: Analysis): Diagnostic[] {
  const out: Diagnostic[] = [];
  for (const loop of analysis.symbols.loops.values()) {
    if (hasErrorInside(analysis, loop.block.span)) continue;
    const around = loop.block.members.find((m) => m.kind === 'around');
    try {
      // the closed loop's poles only (the margins of a full linearization are not needed here)
      const lin = loopLinear(analysis, loop.name);
      if (!lin.ok) continue;
      const pr = polesOf(lin.closed.A);
      if (!pr.ok || pr.unstableCount === 0) continue;
      const right = pr.poles.filter((p) => p.re > pr.tolerance && p.im >= 0);
      if (right.length === 0) continue;
      // without `around`: each plant's first operating point, zero for a plant without one (loop-linear.ts)
      const at = around ? `at ${around.target.map((t) => t.name).join('.')}` : "at its plants' first operating points";
      const n = pr.unstableCount;
      out.push({
        code: 'LW604',
        severity: 'warning',
        span: around ? around.span : loop.nameSpan,
        message: `the closed loop ${loop.name}, linearized ${at}, is unstable: ${n === 1 ? 'a pole' : `${n} poles`} right of the imaginary axis (${right.map(poleText).join(', ')} rad/s); small motions about this point grow`,
      });
    } catch (err) {
      out.push({ code: 'LW604', severity: 'warning', span: loop.nameSpan, message: `the stability of ${loop.name} could not be checked (internal error, please report): ${(err as Error).message}` });
    }
  }
  return out;
}

/**
 * LW604 as the editor and `loopwright check` show it: judged only in a file without errors, since
 * only such a file has values to linearize.
 */
export function stabilityDiagnostics(analysis: Analysis): Diagnostic[] {
  return analysis.diagnostics.some((d) => d.severity === 'error') ? [] : checkLoopStability(analysis);
}
