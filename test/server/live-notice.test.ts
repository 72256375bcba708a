// The running notice of live runs (server/src/live.ts), with a host whose runs end when the test
// says: a run still going after the notice time is announced as running once, before its
// report; a run that ends sooner sends only its report; a run made stale by a newer version
// announces nothing.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyze } from '../../language/src/analysis';
import type { LoopRunReport } from '../../language/src/protocol';
import { LineMap } from '../../server/src/convert';
import type { DocState } from '../../server/src/documents';
import { LiveRuns, type LiveHost } from '../../server/src/live';
import type { LiveReportParams, LiveStatusParams } from '../../server/src/live-protocol';

const BOOM = readFileSync(join(__dirname, '..', '..', 'samples', 'boom.loop'), 'utf8');
const URI = 'file:///notice.loop';
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

function harness(noticeMs: number) {
  let version = 1;
  const state = (): DocState => ({ uri: URI, version, analysis: analyze(BOOM), lines: new LineMap(BOOM), clean: true });
  const reports: LiveReportParams[] = [];
  const statuses: LiveStatusParams[] = [];
  const pending: Array<() => void> = [];
  const host: LiveHost = {
    state: () => state(),
    version: () => version,
    enabled: () => true,
    job: (text, loop, mode) => ({ text, loop, mode, budgetMs: 1000, settings: {} }) as never,
    run: () => new Promise<LoopRunReport>((resolve) => pending.push(() => resolve({ loop: 'Upright' } as LoopRunReport))),
    report: (p) => reports.push(p),
    status: (p) => statuses.push(p),
    log: (where, err) => {
      throw new Error(`${where}: ${String(err)}`);
    },
  };
  const live = new LiveRuns(host, 0, noticeMs);
  live.watch({ uri: URI, loop: 'Upright', open: true, mode: 'simulate' });
  const edit = () => {
    version++;
    live.changed(URI);
  };
  /** Waits until a run has been asked for (the debounce is 0 ms, the check is synchronous). */
  const started = async (n: number) => {
    for (let i = 0; i < 200 && pending.length < n; i++) await sleep(5);
    expect(pending.length).toBe(n);
  };
  return { reports, statuses, pending, edit, started, version: () => version };
}

describe('live run notice', () => {
  it('a run still going after the notice time says running once, then its report clears it', async () => {
    const h = harness(30);
    h.edit();
    await h.started(1);
    await sleep(120);
    expect(h.statuses).toEqual([{ uri: URI, loop: 'Upright', version: 2, kind: 'running', message: '' }]);
    expect(h.reports).toEqual([]);
    h.pending[0]();
    await sleep(10);
    expect(h.reports.map((r) => r.version)).toEqual([2]);
    await sleep(60);
    expect(h.statuses.length).toBe(1);
  });

  it('a run that ends before the notice time sends only its report', async () => {
    const h = harness(200);
    h.edit();
    await h.started(1);
    h.pending[0]();
    await sleep(300);
    expect(h.statuses).toEqual([]);
    expect(h.reports.map((r) => r.version)).toEqual([2]);
  });

  it('a run made stale by a newer version announces nothing for the old version', async () => {
    const h = harness(60);
    h.edit();
    await h.started(1);
    h.edit(); // version 3 cancels the run of version 2 at once
    await h.started(2);
    await sleep(150);
    expect(h.statuses.map((s) => [s.kind, s.version])).toEqual([['running', 3]]);
    h.pending[0]();
    h.pending[1]();
    await sleep(10);
    expect(h.reports.map((r) => r.version)).toEqual([3]);
  });
});
