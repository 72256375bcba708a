// Strongly connected components, shared by the as-you-type algebraic-loop check
// (check/wiring.ts) and the model compiler (model/loop.ts).

/** Tarjan's strongly connected components (iterative). */
export function stronglyConnected<T>(nodes: T[], next: (n: T) => T[]): T[][] {
  const index = new Map<T, number>(), low = new Map<T, number>(), onStack = new Set<T>();
  const stack: T[] = [];
  const out: T[][] = [];
  let counter = 0;
  for (const root of nodes) {
    if (index.has(root)) continue;
    const work: Array<{ v: T; it: number; succ: T[] }> = [{ v: root, it: 0, succ: next(root) }];
    index.set(root, counter);
    low.set(root, counter++);
    stack.push(root);
    onStack.add(root);
    while (work.length) {
      const top = work[work.length - 1];
      if (top.it < top.succ.length) {
        const w = top.succ[top.it++];
        if (!index.has(w)) {
          index.set(w, counter);
          low.set(w, counter++);
          stack.push(w);
          onStack.add(w);
          work.push({ v: w, it: 0, succ: next(w) });
        } else if (onStack.has(w)) low.set(top.v, Math.min(low.get(top.v)!, index.get(w)!));
      } else {
        work.pop();
        if (work.length) {
          const parent = work[work.length - 1].v;
          low.set(parent, Math.min(low.get(parent)!, low.get(top.v)!));
        }
        if (low.get(top.v) === index.get(top.v)) {
          const comp: T[] = [];
          let w: T;
          do {
            w = stack.pop()!;
            onStack.delete(w);
            comp.push(w);
          } while (w !== top.v);
          out.push(comp.reverse());
        }
      }
    }
  }
  return out;
}
