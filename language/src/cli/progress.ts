// A one-line progress bar on standard error for long commands. Drawn only on a terminal
// (io.isTTY); piped or redirected output gets nothing, so logs and scripts stay clean. Each
// update rewrites the previous line (cursor up, clear line), and at most every `minMs`.

import type { CliIO } from './types';

const UP_CLEAR = '\x1b[1A\x1b[2K';

export interface ProgressOptions {
  /** Width of the bar in characters. */
  width?: number;
  /** Least time between redraws in ms (the final state is always drawn). */
  minMs?: number;
  now?: () => number;
}

export class Progress {
  private drawn = false;
  private last = -Infinity;
  private readonly started: number;
  private readonly width: number;
  private readonly minMs: number;
  private readonly now: () => number;

  constructor(
    private readonly io: CliIO,
    private readonly label: string,
    private total: number,
    o: ProgressOptions = {},
  ) {
    this.width = o.width ?? 30;
    this.minMs = o.minMs ?? 80;
    this.now = o.now ?? (() => Date.now());
    this.started = this.now();
  }

  get enabled(): boolean {
    return this.io.isTTY;
  }

  /** The bar line for `done` of `total` (exposed for tests). */
  line(done: number, note = ''): string {
    const total = Math.max(1, this.total);
    const frac = Math.min(1, Math.max(0, done / total));
    const full = Math.round(frac * this.width);
    const secs = (this.now() - this.started) / 1000;
    return `${this.label} [${'█'.repeat(full)}${'░'.repeat(this.width - full)}] ${done}/${this.total}  ${secs.toFixed(1)} s${note ? `  ${note}` : ''}`;
  }

  /** Changes the total (bisection does not know its run count in advance). */
  setTotal(total: number): void {
    this.total = total;
  }

  update(done: number, note = ''): void {
    if (!this.enabled) return;
    const t = this.now();
    if (done < this.total && t - this.last < this.minMs) return;
    this.last = t;
    this.io.err(`${this.drawn ? UP_CLEAR : ''}${this.line(done, note)}`);
    this.drawn = true;
  }

  /** Leaves the bar at its final state with a closing note. */
  finish(done: number, note = ''): void {
    if (!this.enabled) return;
    this.last = -Infinity;
    this.io.err(`${this.drawn ? UP_CLEAR : ''}${this.line(done, note)}`);
    this.drawn = true;
  }
}
