// Every diagnostic code the language reports, with its default severity and a one-line
// explanation. Codes are stable: never renumber, only add. docs/diagnostics.md lists them and a
// test keeps the two in step.
//
// Ranges:  LW1xx syntax · LW2xx names and structure · LW3xx units and dimensions ·
//          LW4xx wiring and loops · LW5xx model (realization, sizes, sampling) ·
//          LW6xx linear analysis (operating points, equilibrium) · LW7xx run-time.

import type { Severity } from '../diagnostics';

export interface CodeInfo {
  code: string;
  severity: Severity;
  title: string;
}

const table = [
  // syntax
  ['LW101', 'error', 'Syntax error: unexpected or missing text'],
  ['LW102', 'error', "Unit bracket not closed: expected ']'"],
  ['LW103', 'error', 'Unterminated string'],
  ['LW104', 'error', 'Unknown character'],
  ['LW105', 'error', 'Invalid number'],
  ['LW106', 'error', 'Expression nested too deeply'],
  // names and structure
  ['LW201', 'error', 'Undefined name'],
  ['LW202', 'error', 'Duplicate name in a scope'],
  ['LW203', 'error', 'Derivative assigned to something that is not a state'],
  ['LW204', 'error', 'State without a derivative equation'],
  ['LW205', 'error', 'State with more than one derivative equation'],
  ['LW206', 'error', 'Output without an equation'],
  ['LW207', 'error', 'Output given a value more than once'],
  ['LW208', 'error', 'Laplace variable s used outside a transfer relation'],
  ['LW209', 'warning', 'A param named s is shadowed by the Laplace variable in a transfer relation'],
  ['LW210', 'error', 'Reference to a member of an unknown system'],
  ['LW211', 'error', 'Unknown member of a system'],
  ['LW212', 'error', 'Operating point entry that is not a state or an input'],
  ['LW213', 'error', 'Target of around, start or sweep does not exist'],
  ['LW214', 'error', 'Member not allowed in this kind of block'],
  ['LW215', 'error', 'Unknown function or wrong number of arguments'],
  ['LW216', 'error', 'Transfer relation or pid law names something that is not an input/output'],
  ['LW217', 'error', 'Unknown entry name in braces'],
  ['LW218', 'error', 'A name is used before its definition or depends on itself'],
  ['LW219', 'error', 'Limit on something that is not an input or an output'],
  ['LW220', 'error', 'Invalid option value'],
  ['LW221', 'warning', 'Operating point does not give every state and input'],
  ['LW222', 'error', 'A name is used where its kind does not fit'],
  // units and dimensions
  ['LW301', 'error', 'Unknown unit'],
  ['LW302', 'error', 'Dimensions do not match'],
  ['LW303', 'error', 'Declared unit does not match the inferred one'],
  ['LW304', 'error', 'Function needs a dimensionless argument'],
  ['LW305', 'error', 'Exponent must be a dimensionless constant'],
  ['LW306', 'warning', 'Hz used where an angular frequency is expected (factor 2π)'],
  ['LW307', 'warning', 'Absolute temperatures added'],
  ['LW308', 'warning', 'Bare number where a dimensioned quantity is expected'],
  ['LW309', 'error', 'Matrix sizes do not fit the declared states, inputs and outputs'],
  ['LW310', 'error', 'Comparison or condition of the wrong dimension'],
  ['LW311', 'warning', 'Unit check of a member stopped on an internal error'],
  // wiring and loops
  ['LW401', 'error', 'Input wired more than once'],
  ['LW402', 'error', 'Input of a used system never wired'],
  ['LW403', 'error', 'Arrow target is not an input'],
  ['LW404', 'error', 'Algebraic loop'],
  ['LW405', 'error', 'Signal read outside a loop or time used inside a system'],
  ['LW406', 'warning', 'Loop without a simulate member'],
  ['LW407', 'error', 'Duplicate loop member that may appear once'],
  ['LW408', 'error', 'Show, expect or saturated names something that cannot be plotted or measured'],
  ['LW409', 'error', 'Expect is not a comparison'],
  // model
  ['LW501', 'error', 'Transfer relation is improper (more zeros than poles)'],
  ['LW502', 'error', 'Transfer relation is not a rational function of s'],
  ['LW503', 'error', 'Sample period must be positive'],
  ['LW504', 'error', 'PID derivative without a roll-off is improper'],
  ['LW505', 'error', 'Limit bounds are not constant or lo > hi'],
  ['LW506', 'error', 'Param value is not constant'],
  ['LW507', 'warning', 'PID anti-windup without a limit on its output'],
  ['LW508', 'error', 'Unknown discretization method'],
  ['LW509', 'error', 'Sweep values are invalid'],
  // linear analysis
  ['LW601', 'warning', 'Operating point is not an equilibrium'],
  ['LW602', 'warning', 'Operating point on or outside a limit'],
  ['LW603', 'info', 'Trim found the input that holds the operating point'],
  ['LW604', 'warning', 'Closed loop unstable at the operating point'],
  // run-time
  ['LW701', 'error', 'Run failed: value not finite'],
  ['LW702', 'error', 'Run failed: step size too small'],
  ['LW703', 'error', 'Run failed: too many steps'],
  ['LW704', 'error', 'Run stopped: time budget exceeded'],
  ['LW705', 'error', 'Run cancelled'],
  ['LW706', 'error', 'Algebraic loop did not converge'],
  ['LW707', 'error', 'Expect failed'],
] as const satisfies ReadonlyArray<readonly [string, Severity, string]>;

export type Code = (typeof table)[number][0];

export const CODES: ReadonlyMap<string, CodeInfo> = new Map(table.map(([code, severity, title]) => [code, { code, severity, title }]));
