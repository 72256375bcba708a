// One example per diagnostic code, for docs/diagnostics.md. A `file` example is a whole .loop
// file that the test analyses (front end, model compiler, operating-point checks) and that must
// report its code; a `text` example describes a situation that only arises while running (or
// inside the tool) and is shown as is.

export interface CodeExample {
  kind: 'file' | 'text';
  body: string;
  /** One sentence on the cause and the fix. */
  note: string;
}

const PLANT = `plant Cart {
  state x [m]
  input push [m/s]
  output at [m] = x
  x' = push
  operating point rest { x = 0 [m], push = 0 [m/s] }
}`;

const LOOP = (members: string) => `${PLANT}
controller Law {
  input err [m]
  output push [m/s]
  push / err = 2 [1/s]
}
loop Park {
  signal home = 1 [m]
  home - Cart.at -> Law.err
  Law.push -> Cart.push
${members}
}`;

/** A controller used in a loop that feeds its input `e` a constant (model checks need a loop). */
const USED = (controller: string, feed = '1') => `${controller}
loop L {
  ${feed} -> C.e
  simulate 1 [s]
}`;

const f = (body: string, note: string): CodeExample => ({ kind: 'file', body, note });
const t = (body: string, note: string): CodeExample => ({ kind: 'text', body, note });

export const EXAMPLES: Record<string, CodeExample> = {
  LW101: f(`plant P {\n  param k = 2 *\n}`, 'An expression or member is cut short; complete it or remove the stray token.'),
  LW102: f(`plant P {\n  param k = 2 [m/s\n}`, "Close the unit with ']'."),
  LW103: f(`plant P "a description that never ends {\n}`, 'Close the string with a double quote on the same line.'),
  LW104: f(`plant P {\n  param k = 2 @ 3\n}`, 'Remove the character; only the operators of the language are allowed.'),
  LW105: f(`plant P {\n  param k = 1e+   # a number whose exponent is missing\n}`, 'Write the number in full, as in 1e3 or 0.5.'),
  LW106: t(`param k = ((((((((((((((( ... hundreds of levels ... )))))))))))))))`, 'Split the expression with params or lets.'),
  LW201: f(`plant P {\n  param k = gain * 2\n}`, 'Declare the name (here gain) or correct its spelling.'),
  LW202: f(`plant P {\n  param k = 1\n  param k = 2\n}`, 'Rename one of the two.'),
  LW203: f(`plant P {\n  param k = 1 [1/s]\n  k' = 0 [1/s^2]\n}`, "Only states have derivatives: declare 'state k [...]' or drop the equation."),
  LW204: f(`plant P {\n  state x [m]\n}`, "Give the state its equation: x' = ..."),
  LW205: f(`plant P {\n  state x [m]\n  x' = 0 [m/s]\n  x' = 1 [m/s]\n}`, 'Keep one derivative equation per state.'),
  LW206: f(`plant P {\n  output y [m]\n}`, 'Give the output a value: = EXPR, a transfer relation, a pid law or a linear block.'),
  LW207: f(`controller C {\n  input e [1]\n  output y [1] = e\n  y / e = 2\n}`, 'An output gets its value from one place only.'),
  LW208: f(`plant P {\n  param k = s * 2\n}`, 's is the Laplace variable; it may appear only in a transfer relation.'),
  LW209: f(`controller C {\n  param s = 2\n  input e [1]\n  output y [1]\n  y / e = 1 / (1 + s)\n}`, "Rename the param: inside 'y / e = ...' s is the Laplace variable."),
  LW210: f(`${PLANT}\nloop L {\n  use Other = Drive(k = 1)\n  0 [m/s] -> Cart.push\n  simulate 1 [s]\n}`, 'Name a system the file declares (or declare it).'),
  LW211: f(`${PLANT}\nloop L {\n  use Second = Cart(mass = 2 [kg])\n  0 [m/s] -> Cart.push\n  0 [m/s] -> Second.push\n  simulate 1 [s]\n}`, 'Override a param the system declares.'),
  LW212: f(`plant P {\n  param k = 1 [1/s]\n  state x [m]\n  x' = -k * x\n  operating point p { x = 0 [m], k = 1 [1/s] }\n}`, 'An operating point gives states and inputs only; params keep their values.'),
  LW213: f(LOOP('  start Cart.v = 1 [m/s]\n  simulate 1 [s]'), 'Name a state (start, sweep start), a param (sweep) or an operating point (around) that exists.'),
  LW214: f(`plant P {\n  state x [m]\n  x' = 0 [m/s]\n  sample every 1 [ms]\n}`, 'Sampling belongs to controllers; operating points to plants; wiring to loops.'),
  LW215: f(`plant P {\n  state x [1]\n  x' = sqrt(x, 2) * 1 [1/s]\n}`, 'Call a function the language has, with its number of arguments.'),
  LW216: f(`controller C {\n  param k = 2\n  input e [1]\n  output y [1]\n  k / e = 2\n}`, 'A transfer relation reads OUTPUT / INPUT of its own system.'),
  LW217: f(LOOP('  simulate 1 [s] { tolerence = 1e-6 }'), 'Use one of the documented entry names (here tolerance).'),
  LW218: f(`plant P {\n  param a = b\n  param b = a\n}`, 'Params may use only earlier params; lets and outputs must not depend on themselves.'),
  LW219: f(`plant P {\n  param k = 2\n  state x [m]\n  x' = 0 [m/s]\n  limit k within 0 .. 1\n}`, 'Limit an input or an output.'),
  LW220: f(LOOP('  simulate 1 [s] { method = fastest }'), 'Use one of the values the option accepts (method: adaptive, extrapolation, stiff).'),
  LW221: f(`plant P {\n  state x [m]\n  input u [m/s]\n  x' = u\n  operating point p { x = 0 [m] }\n}`, 'Give every state and input; a missing one takes its default.'),
  LW222: f(LOOP('  expect final(Cart) > 0.9 [m]\n  simulate 1 [s]'), 'The name is declared, but as something else than what this place needs (here a system, where a value is read).'),
  LW301: f(`plant P {\n  param k = 2 [furlong]\n}`, 'Use an SI or common engineering unit, with SI prefixes.'),
  LW302: f(`plant P {\n  param a = 1 [m] + 2 [s]\n}`, 'Both sides of +, -, a comparison, min, max or clamp need the same dimension.'),
  LW303: f(`plant P {\n  state x [m]\n  x' = 2 [m]\n}`, "x' must be in the state's unit per time; here it is a length."),
  LW304: f(`plant P {\n  param a = sin(2 [m])\n}`, 'sin, cos, exp, log, ... take dimensionless arguments; divide by a reference.'),
  LW305: f(`plant P {\n  param n = 2 [m]\n  param a = 3 ^ n\n}`, 'An exponent must be a dimensionless constant.'),
  LW306: f(`controller C {\n  input e [1]\n  output y [1]\n  y / e = 1 / (1 + s / 10 [Hz])\n}`, 'Hz counts cycles: write 2*pi*10 [rad/s] for 10 Hz as an angular frequency.'),
  LW307: f(`plant P {\n  param a = 20 [degC] + 30 [degC]\n}`, 'Adding absolute temperatures is rarely meant; a difference is in K.'),
  LW308: f(`plant P {\n  state x [m]\n  x' = 2\n}`, 'Give the number its unit: 2 [m/s]. A bare number is read in SI, so a bare 0 fits every unit but one with an offset: for a degC value it is 0 K, absolute zero, and gets this warning too (write 0 [degC]).'),
  LW309: f(`controller C {\n  input e [1]\n  output y [1]\n  linear { A = [[1, 0]], B = [[1]], C = [[1]] }\n}`, 'A is n×n for n states, B n×inputs, C outputs×n, D outputs×inputs.'),
  LW310: f(`plant P {\n  state x [m]\n  x' = if x then 1 [m/s] else 0 [m/s]\n}`, 'A condition is a comparison (or and/or/not of comparisons).'),
  LW311: t(`(reported on a member whose unit check failed inside the tool)`, 'The rest of the file is still checked; please report the file.'),
  LW401: f(LOOP('  0 [m/s] -> Cart.push\n  simulate 1 [s]'), 'Wire each input once; add the sources in one arrow.'),
  LW402: f(`${PLANT}\nloop L {\n  show Cart.at\n  simulate 1 [s]\n}`, "Wire the input: EXPR -> Cart.push."),
  LW403: f(LOOP('  Law.push -> Cart.at\n  simulate 1 [s]'), 'An arrow ends at an input.'),
  LW404: f(`controller A {\n  input e [1]\n  output y [1] = 2 * e\n}\ncontroller B {\n  input e [1]\n  output y [1] = e\n}\nloop L {\n  1 - B.y -> A.e\n  A.y -> B.e\n  simulate 1 [s]\n}`, "Add a state (a filter, a lag) in the cycle, or write 'solve algebraic' in the loop."),
  LW405: f(`plant P {\n  state x [m]\n  x' = t * 1 [m/s^2]\n}`, 'Inside a system t is an ordinary name: feed time-varying values in from a loop signal.'),
  LW406: f(LOOP(''), 'Add simulate DURATION; without it the loop runs for 10 s.'),
  LW407: f(LOOP('  simulate 1 [s]\n  simulate 2 [s]'), 'simulate, compare linear, show and solve algebraic may appear once per loop.'),
  LW408: f(LOOP('  simulate 1 [s]\n  expect saturated(Cart.at) < 0.1'), 'saturated() names a limited input or output; show and expect name signals of the loop.'),
  LW409: f(LOOP('  simulate 1 [s]\n  expect final(Cart.at)'), 'An expect compares: expect final(Cart.at) > 0.9 [m].'),
  LW501: f(USED(`controller C {\n  input e [1]\n  output y [1]\n  y / e = s * 1 [s]\n}`), 'A transfer relation needs at least as many poles as zeros: add a roll-off.'),
  LW502: f(USED(`controller C {\n  input e [1]\n  output y [1]\n  y / e = exp(-s * 1 [s])\n}`), 'Only polynomials in s and their quotients; approximate a delay by a rational one.'),
  LW503: f(USED(`controller C {\n  input e [1]\n  output y [1] = e\n  sample every 0 [s]\n}`), 'The period must be a positive time.'),
  LW504: f(USED(`controller C {\n  input e [m]\n  output y [N]\n  pid y from e { kp = 1 [N/m], kd = 1 [N*s/m] }\n}`, '1 [m]'), 'Give the derivative a roll-off (rad/s).'),
  LW505: f(USED(`controller C {\n  input e [1]\n  output y [1] = e\n  limit y within 1 .. -1\n}`), 'Bounds are constants with lo ≤ hi.'),
  LW506: f(`controller C {\n  input e [1]\n  output y [1]\n  state z [1]\n  z' = e * 1 [1/s]\n  pid y from e { kp = z }\n}`, 'Gains, bounds and periods must be constants: params and numbers.'),
  LW507: f(USED(`controller C {\n  input e [m]\n  output y [N]\n  pid y from e { kp = 1 [N/m], ki = 1 [N/(m*s)], antiwindup = 1 [s] }\n}`, '1 [m]'), 'Back-calculation needs a limit on the pid output: declare limit y within LO .. HI.'),
  LW508: f(`controller C {\n  input e [1]\n  output y [1] = e\n  sample every 1 [ms] by magic\n}`, 'Use tustin, hold or forward.'),
  LW509: t(`sweep Law.k over 0 .. 2 steps 3   (a value for which the transfer relation cannot be realized)`, 'The run for that value fails with this code; the other runs of the sweep go on.'),
  LW601: f(`plant P {\n  state x [m]\n  input u [m/s]\n  output y [m] = x\n  x' = u - 1 [m/s]\n  operating point p { x = 0 [m], u = 0 [m/s] }\n}`, 'The point does not hold still; the quick fix computes the input that holds it.'),
  LW602: f(`plant P {\n  state x [m]\n  input u [m/s]\n  output y [m] = x\n  x' = u - x * 1 [1/s]\n  limit u within 0 [m/s] .. 1 [m/s]\n  operating point p { x = 2 [m], u = 2 [m/s] }\n}`, 'The linear model assumes slope 1 inside the limits; at or past a limit it does not describe the plant.'),
  LW603: t(`plant P { ... x' = u - 1 [m/s] ... operating point p { x = 0 [m], u = 0 [m/s] } }\n  → with u = 1 [m/s] the point holds`, 'Information attached to LW601: the quick fix writes the input that trim found.'),
  LW604: f(`plant Tank {\n  state level [m]\n  input inflow [m/s]\n  output y [m] = level\n  level' = 2 [1/s] * level + inflow\n  operating point rest { level = 0 [m], inflow = 0 [m/s] }\n}\ncontroller Gain {\n  input e [m]\n  output u [m/s]\n  u / e = 1 [1/s]\n}\nloop Hold {\n  signal target = 0 [m]\n  target - Tank.y -> Gain.e\n  Gain.u -> Tank.inflow\n  around Tank.rest\n  simulate 1 [s]\n}`, 'Retune the controller; the poles and margins in a linearization show which mode is unstable.'),
  LW701: t(`run failed: Tank.level is no longer finite at t = 3.2 s (sqrt of a negative value)`, 'Look for a division by zero, a square root or logarithm of a negative value, or a growing state.'),
  LW702: t(`run failed: the step size became too small at t = 0.41 s while integrating Boom.rate`, 'The solution blows up or jumps there; check the model near that time.'),
  LW703: t(`run failed: too many steps by t = 1515 s while integrating Fan.current; the loop looks stiff`, "Fast and slow time constants together: write method = stiff in the simulate options."),
  LW704: t(`run stopped after 10000 ms at t = 40 s of 3600 s: the time budget is 10000 ms`, 'Shorten the run, loosen the tolerance, or raise the budget in the simulate options.'),
  LW705: t(`run cancelled at t = 2.5 s`, 'The run was stopped on request.'),
  LW706: t(`the algebraic loop A.e → B.e did not converge at t = 0.3 s`, "Newton's iteration under 'solve algebraic' failed; break the loop with a state or give better start values."),
  LW707: t(`FAIL expect settling(Boom.seen, 2 [%]) < 3 [s]   (measured 7.98 s)`, 'The requirement does not hold for this run; the measured value is shown with it.'),
};
