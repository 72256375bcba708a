// Live runs over stdio: a watched loop re-runs after edits (loopwright/watch → liveReport), a burst
// of edits runs only its last version, an edit with an error answers with liveStatus and its line,
// and nothing runs for an unwatched loop or with the setting off.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DidChangeConfigurationNotification } from 'vscode-languageserver-protocol';
import type { LoopRunReport } from '../../language/src/protocol';
import type { LiveReportParams, LiveStatusParams } from '../../server/src/live-protocol';
import { buildOnce, ROOT, Server } from './harness';
import { freshUri, rangeOf } from './features';

let server: Server;

beforeAll(async () => {
  buildOnce();
  ({ server } = await Server.start({ initializationOptions: { trusted: true, settings: { run: { timeBudgetMs: 10000 }, live: { enabled: true } } } }));
});

afterAll(async () => {
  await server?.stop();
});

const BOOM = readFileSync(join(ROOT, 'samples', 'boom.loop'), 'utf8');
const KP = 'param kp = 14 [N*m/rad]';
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** Replaces the whole text (a full-document change), returns the new version. */
function setText(uri: string, text: string): number {
  return server.change(uri, [{ text }]);
}

/** Replaces kp's number in the current text through an incremental change. */
function withKp(text: string, kp: string): string {
  const at = text.indexOf('param kp = ');
  expect(at).toBeGreaterThan(0);
  const from = at + 'param kp = '.length;
  const to = text.indexOf(' [', from);
  return text.slice(0, from) + kp + text.slice(to);
}

const reportsOf = (uri: string) => server.notifications<LiveReportParams>('loopwright/liveReport').filter((p) => p.uri === uri);
// the errors only: a run that takes longer than LIVE_RUNNING_NOTICE_MS also says it is running
const statusesOf = (uri: string) => server.notifications<LiveStatusParams>('loopwright/liveStatus').filter((p) => p.uri === uri && p.kind === 'error');
const tilt = (r: LoopRunReport) => r.runs[0].signals['Boom.tilt'];
const kpKnob = (r: LoopRunReport) => r.params?.find((k) => k.name === 'Steady.kp');

async function openWatched(name: string): Promise<string> {
  const uri = freshUri(name);
  await server.open(uri, BOOM);
  await server.conn.sendNotification('loopwright/watch', { uri, loop: 'Upright', open: true, mode: 'simulate' });
  return uri;
}

describe('live runs', () => {
  it('an edit of kp re-runs the watched loop: the new report differs, and editing back gives the first runs again', async () => {
    const uri = await openWatched('live-kp');
    const first = await server.request<LoopRunReport>('loopwright/run', { uri, loop: 'Upright', mode: 'simulate' });
    expect(kpKnob(first)?.value).toBe(14);
    expect(reportsOf(uri)).toEqual([]);

    // an incremental change of the literal's number, as an editor sends it
    const numberAt = BOOM.indexOf(KP) + 'param kp = '.length;
    const v2 = server.change(uri, [{ range: rangeOf(BOOM, { start: numberAt, end: numberAt + 2 }), text: '40' }]);
    const live = await server.notificationWhere<LiveReportParams>('loopwright/liveReport', (p) => p.uri === uri && p.version === v2);
    expect(live.loop).toBe('Upright');
    expect(live.report.loop).toBe('Upright');
    expect(kpKnob(live.report)?.value).toBe(40);
    expect(live.report.poles?.closed.length).toBeGreaterThan(0);
    expect(live.report.runs.length).toBe(first.runs.length);
    const a = tilt(first);
    const b = tilt(live.report);
    expect(b.length).toBe(a.length);
    const largest = Math.max(...a.map((x, i) => Math.abs(x - b[i])));
    expect(largest).toBeGreaterThan(1e-3);
    // the closed-loop poles moved with the gain
    expect(live.report.poles).not.toEqual(first.poles);

    const v3 = setText(uri, BOOM);
    const back = await server.notificationWhere<LiveReportParams>('loopwright/liveReport', (p) => p.uri === uri && p.version === v3);
    expect(kpKnob(back.report)?.value).toBe(14);
    const c = tilt(back.report);
    expect(Math.max(...a.map((x, i) => Math.abs(x - c[i])))).toBeLessThan(1e-9);
    expect(statusesOf(uri)).toEqual([]);
    server.close(uri);
  });

  it('a burst of 10 rapid edits runs only the last version', async () => {
    const uri = await openWatched('live-burst');
    const versions: number[] = [];
    for (let i = 0; i < 10; i++) {
      versions.push(setText(uri, withKp(BOOM, String(15 + i))));
      await sleep(10);
    }
    const last = versions[versions.length - 1];
    const hit = await server.notificationWhere<LiveReportParams>('loopwright/liveReport', (p) => p.uri === uri && p.version === last);
    expect(kpKnob(hit.report)?.value).toBe(24);
    // give any run of an older version time to report, were one left running
    await sleep(1200);
    const reports = reportsOf(uri);
    expect(reports.map((p) => p.version)).toEqual([last]);
    expect(statusesOf(uri)).toEqual([]);
    server.close(uri);
  });

  it('an edit that is slower than the pause but faster than a run: the older run is cancelled, only the newest reports', async () => {
    const uri = await openWatched('live-cancel');
    const v2 = setText(uri, withKp(BOOM, '30'));
    await sleep(200); // past the pause: the run of v2 has started
    const v3 = setText(uri, withKp(BOOM, '31'));
    await server.notificationWhere<LiveReportParams>('loopwright/liveReport', (p) => p.uri === uri && p.version === v3);
    await sleep(800);
    const seen = reportsOf(uri).map((p) => p.version);
    // v2 reports only if its run finished within the 200 ms before v3 arrived; never after v3
    expect(seen[seen.length - 1]).toBe(v3);
    expect(seen.filter((v) => v !== v2 && v !== v3)).toEqual([]);
    expect(seen.filter((v) => v === v3)).toHaveLength(1);
    server.close(uri);
  });

  it('an edit that introduces an error: liveStatus with the first error and its line, no report', async () => {
    const uri = await openWatched('live-error');
    const broken = BOOM.replace('kd*s/(1 + s/wf)', 'kx*s/(1 + s/wf)');
    expect(broken).not.toBe(BOOM);
    const line = broken.split('\n').findIndex((l) => l.includes('kx*s')) + 1;
    const v2 = setText(uri, broken);
    const status = await server.notificationWhere<LiveStatusParams>('loopwright/liveStatus', (p) => p.uri === uri && p.version === v2 && p.kind === 'error');
    expect(status).toMatchObject({ loop: 'Upright', kind: 'error', line });
    expect(status.message).toMatch(/LW201/);
    expect(status.message).toMatch(/kx/);
    await sleep(600);
    expect(reportsOf(uri)).toEqual([]);

    // the error fixed: runs again
    const v3 = setText(uri, BOOM);
    const fixed = await server.notificationWhere<LiveReportParams>('loopwright/liveReport', (p) => p.uri === uri && p.version === v3);
    expect(kpKnob(fixed.report)?.value).toBe(14);
    server.close(uri);
  });

  it('a syntax error names its line too', async () => {
    const uri = await openWatched('live-syntax');
    const broken = BOOM.replace('simulate 8 [s]', 'simulate 8 [s');
    const line = broken.split('\n').findIndex((l) => l.includes('simulate 8 [s')) + 1;
    const v2 = setText(uri, broken);
    const status = await server.notificationWhere<LiveStatusParams>('loopwright/liveStatus', (p) => p.uri === uri && p.version === v2 && p.kind === 'error');
    expect(status.message).toMatch(/^LW1\d\d /);
    expect(status.line).toBeGreaterThanOrEqual(line);
    expect(status.line).toBeLessThanOrEqual(line + 1);
    server.close(uri);
  });

  it('nothing runs for a loop whose panel closed, nor for one never watched', async () => {
    const uri = await openWatched('live-unwatch');
    await server.conn.sendNotification('loopwright/watch', { uri, loop: 'Upright', open: false });
    const other = freshUri('live-never');
    await server.open(other, BOOM);
    setText(uri, withKp(BOOM, '33'));
    setText(other, withKp(BOOM, '33'));
    await sleep(1200);
    expect(reportsOf(uri)).toEqual([]);
    expect(reportsOf(other)).toEqual([]);
    expect(statusesOf(uri)).toEqual([]);
    server.close(uri);
    server.close(other);
  });

  it('loopwright.live.enabled off: edits do not re-run; on again: they do', async () => {
    const uri = await openWatched('live-setting');
    await server.conn.sendNotification(DidChangeConfigurationNotification.type, { settings: { loopwright: { live: { enabled: false } } } });
    setText(uri, withKp(BOOM, '20'));
    await sleep(1000);
    expect(reportsOf(uri)).toEqual([]);
    await server.conn.sendNotification(DidChangeConfigurationNotification.type, { settings: { loopwright: { live: { enabled: true } } } });
    const v = setText(uri, withKp(BOOM, '21'));
    const r = await server.notificationWhere<LiveReportParams>('loopwright/liveReport', (p) => p.uri === uri && p.version === v);
    expect(kpKnob(r.report)?.value).toBe(21);
    server.close(uri);
  });

  it('malformed watch notifications are ignored and the server stays up', async () => {
    for (const p of [null, 42, 'x', {}, { uri: 5, loop: 'Upright', open: true }, { uri: 'file:///x.loop', loop: '', open: true }, { uri: 'file:///x.loop', loop: 'U', open: true, mode: 'explode' }]) {
      await server.conn.sendNotification('loopwright/watch', p);
    }
    const uri = await openWatched('live-after-bad');
    const v = setText(uri, withKp(BOOM, '18'));
    const r = await server.notificationWhere<LiveReportParams>('loopwright/liveReport', (p) => p.uri === uri && p.version === v);
    expect(kpKnob(r.report)?.value).toBe(18);
    expect(server.exited).toBeNull();
    server.close(uri);
  });
});
