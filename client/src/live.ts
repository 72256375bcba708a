// Live runs: while `loopwright.live.enabled` is on, an edit to a document re-runs the loops whose
// plot panels are open, after a short pause in typing. A newer edit cancels the run in flight.
import * as vscode from 'vscode';
import { runLoop, type CommandServices } from './commands';
import type { ReportPanel } from './panel';

const PAUSE_MS = 700;

export function watchLiveEdits(services: CommandServices): vscode.Disposable {
  const timers = new Map<string, ReturnType<typeof setTimeout>>();
  const inFlight = new Map<string, vscode.CancellationTokenSource>();

  const rerun = async (panel: ReportPanel) => {
    const key = `${panel.id.uri}#${panel.id.loop}`;
    inFlight.get(key)?.cancel();
    const source = new vscode.CancellationTokenSource();
    inFlight.set(key, source);
    panel.status('running');
    let failure: string | undefined;
    try {
      const report = await runLoop(services, panel.id, panel.mode, { quiet: true, token: source.token, onFailure: (m) => (failure = m) });
      if (source.token.isCancellationRequested) return;
      if (report) panel.show(report, panel.mode);
      panel.status(failure ? 'error' : 'idle', failure);
    } finally {
      if (inFlight.get(key) === source) inFlight.delete(key);
      source.dispose();
    }
  };

  const changes = vscode.workspace.onDidChangeTextDocument((event) => {
    if (event.document.languageId !== 'loop' || event.contentChanges.length === 0) return;
    if (!vscode.workspace.isTrusted) return;
    if (!vscode.workspace.getConfiguration('loopwright', event.document.uri).get<boolean>('live.enabled', true)) return;
    const uri = event.document.uri.toString();
    const panels = services.panels.forDocument(uri).filter((p) => p.report);
    if (panels.length === 0) return;
    clearTimeout(timers.get(uri));
    timers.set(uri, setTimeout(() => {
      timers.delete(uri);
      for (const panel of panels) void rerun(panel);
    }, PAUSE_MS));
  });

  return new vscode.Disposable(() => {
    changes.dispose();
    for (const t of timers.values()) clearTimeout(t);
    for (const s of inFlight.values()) s.cancel();
  });
}
