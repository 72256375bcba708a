// The settings the server uses, from initializationOptions.settings and later from
// workspace/configuration (section `loopwright`). Unknown or malformed values keep defaults.

export const DEFAULT_TIME_BUDGET_MS = 10_000;
const MIN_TIME_BUDGET_MS = 100;

interface Raw {
  tolerance?: unknown;
  method?: unknown;
  run?: { timeBudgetMs?: unknown };
  'run.timeBudgetMs'?: unknown;
  live?: { enabled?: unknown };
  'live.enabled'?: unknown;
}

export class Settings {
  private tolerance?: number;
  private method?: string;
  private budget = DEFAULT_TIME_BUDGET_MS;
  private live = true;

  update(raw: unknown): void {
    if (!raw || typeof raw !== 'object') return;
    const r = raw as Raw;
    if (typeof r.tolerance === 'number' && Number.isFinite(r.tolerance) && r.tolerance > 0) this.tolerance = r.tolerance;
    if (typeof r.method === 'string') this.method = r.method;
    const b = r.run?.timeBudgetMs ?? r['run.timeBudgetMs'];
    if (typeof b === 'number' && Number.isFinite(b)) this.budget = Math.max(MIN_TIME_BUDGET_MS, Math.floor(b));
    const l = r.live?.enabled ?? r['live.enabled'];
    if (typeof l === 'boolean') this.live = l;
  }

  /** `loopwright.live.enabled`: re-run watched loops as their documents are edited. */
  liveEnabled(): boolean {
    return this.live;
  }

  timeBudgetMs(): number {
    return this.budget;
  }

  runDefaults(): { tolerance?: number; method?: string } {
    return { tolerance: this.tolerance, method: this.method };
  }
}
