// Generates a large but valid .loop document of about `lines` lines: chains of small plants and
// controllers wired into loops (synthetic, for benchmarks only).
export function generateDocument(lines) {
  const out = ['# generated benchmark document'];
  let i = 0;
  while (out.length < lines) {
    out.push(
      `plant Cart${i} "cart number ${i}" {`,
      `  param mass = ${1 + (i % 7)} [kg]`,
      `  param friction = 0.${(i % 9) + 1} [N*s/m]`,
      `  let damping = friction / mass`,
      `  state pos [m]`,
      `  state vel [m/s]`,
      `  input force [N]`,
      `  output seen [m] = pos`,
      `  limit force within -10 [N] .. 10 [N]`,
      `  pos' = vel`,
      `  vel' = force / mass - damping * vel + 0.1 [m/s^2] * sin(pos / 1 [m])`,
      `  operating point rest { pos = 0 [m], vel = 0 [m/s], force = 0 [N] }`,
      `}`,
      `controller Hold${i} {`,
      `  param kp = 20 [N/m]`,
      `  param kd = 4 [N*s/m]`,
      `  input err [m]`,
      `  output force [N]`,
      `  force / err = kp + kd*s/(1 + s/50 [rad/s])`,
      `}`,
      `loop Keep${i} {`,
      `  signal target = step(1 [s], 0.2 [m])`,
      `  target - Cart${i}.seen -> Hold${i}.err`,
      `  Hold${i}.force -> Cart${i}.force`,
      `  start Cart${i}.pos = 0.1 [m]`,
      `  simulate 5 [s]`,
      `  show Cart${i}.pos, Cart${i}.force`,
      `  expect settling(Cart${i}.seen, 2 [%]) < 4 [s]`,
      `}`,
    );
    i++;
  }
  return out.join('\n') + '\n';
}
