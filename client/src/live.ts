// Live runs, client side. The server owns them (server/src/live.ts): the client tells it which
// loops have open plot panels (`loopwright/watch`, again after a server restart) and forwards what
// it pushes to the panels: `loopwright/liveReport` updates the panel in place, `loopwright/liveStatus`
// shows the "Not re-run" banner over the last good plot, or that a slow re-run is going on. The setting `loopwright.live.enabled`
// reaches the server with the other settings; reports that arrive after it was turned off are
// dropped here too.
import * as vscode from 'vscode';
import { LiveReportNotification, LiveStatusNotification, WatchNotification, type WatchParams } from '../../server/src/live-protocol';
import type { CommandServices } from './commands';
import type { PanelIdentity } from './panel';
import { parseLiveReport, parseLiveStatus } from './tuning';

function liveEnabled(uri: string): boolean {
  try {
    return vscode.workspace.getConfiguration('loopwright', vscode.Uri.parse(uri)).get<boolean>('live.enabled', true);
  } catch {
    return true;
  }
}

/** A push for a version older than the document's: a newer one is on its way. */
function outdated(uri: string, version: number): boolean {
  const doc = vscode.workspace.textDocuments.find((d) => d.uri.toString() === uri);
  return doc !== undefined && doc.version > version;
}

export function watchLiveRuns(services: CommandServices): vscode.Disposable {
  const { server, panels } = services;
  const watch = (id: PanelIdentity, open: boolean, mode: WatchParams['mode']) => void server.notify(WatchNotification, { uri: id.uri, loop: id.loop, open, mode } satisfies WatchParams);

  const subs = [
    panels.onDidChangeWatch((c) => watch(c.id, c.open, c.mode)),
    server.onDidStart(() => {
      for (const p of panels.all()) watch(p.id, true, p.mode);
    }),
    server.handle(LiveReportNotification, (raw) => {
      const p = parseLiveReport(raw);
      if (!p) {
        server.output.warn('The server sent a live report that was ignored: it does not have the shape of a report.');
        return;
      }
      const panel = panels.get(p);
      if (!panel || !liveEnabled(p.uri) || outdated(p.uri, p.version)) return;
      panel.show(p.report, panel.mode, p.version);
      panel.status('idle');
    }),
    server.handle(LiveStatusNotification, (raw) => {
      const p = parseLiveStatus(raw);
      if (!p) return;
      const panel = panels.get(p);
      if (!panel || !liveEnabled(p.uri) || outdated(p.uri, p.version)) return;
      if (p.kind === 'running') panel.status('running');
      else panel.status('error', p.message, p.line);
    }),
  ];
  return vscode.Disposable.from(...subs);
}
