// The palette and code-lens commands. Each takes [uri, loopName] from a code lens, or works on the
// active editor and asks which loop when the file has several.
import * as vscode from 'vscode';
import { randomUUID } from 'node:crypto';
import { WorkDoneProgress, type WorkDoneProgressBegin, type WorkDoneProgressReport } from 'vscode-languageclient/node';
import { Commands, RunRequest, type LoopRunReport, type RunMode, type RunRequestParams } from '../../language/src/protocol';
import { reportToCsv } from '../media/csv';
import { loopNames, type SymbolLike } from './loops';
import type { ServerConnection } from './language-client';
import type { PanelIdentity, ReportPanels } from './panel';
import { fileStem, saveFile, textBytes } from './save';
import { requireTrust } from './trust';

/** Self-contained HTML of a report (async: it reads the built page assets). */
export type ReportBuilder = (report: LoopRunReport) => Promise<string>;

export interface CommandServices {
  server: ServerConnection;
  panels: ReportPanels;
  /** Self-contained HTML report of a run, when the page module provides one. */
  reportHtml?: ReportBuilder;
}

const RUN_TITLES: Record<RunMode, (loop: string) => string> = {
  simulate: (loop) => `Simulating ${loop}`,
  compare: (loop) => `Simulating ${loop} and its linearization`,
  sweep: (loop) => `Sweeping ${loop}`,
};

/** The [uri, loop] a command works on: from its arguments, or from the active editor. */
export async function resolveTarget(args: unknown[]): Promise<PanelIdentity | undefined> {
  const [first, second] = args;
  const fromArgs = typeof first === 'string' ? first : first instanceof vscode.Uri ? first.toString() : undefined;
  if (fromArgs && typeof second === 'string' && second) return { uri: fromArgs, loop: second };

  const document = fromArgs
    ? await vscode.workspace.openTextDocument(vscode.Uri.parse(fromArgs))
    : vscode.window.activeTextEditor?.document;
  if (!document || document.languageId !== 'loop') {
    void vscode.window.showInformationMessage('Loopwright: open a .loop file to run one of its loops.');
    return undefined;
  }
  let symbols: SymbolLike[] | undefined;
  try {
    symbols = await vscode.commands.executeCommand<SymbolLike[]>('vscode.executeDocumentSymbolProvider', document.uri);
  } catch {
    symbols = undefined;
  }
  const names = loopNames(symbols, document.getText());
  if (names.length === 0) {
    void vscode.window.showInformationMessage(`Loopwright: ${vscode.workspace.asRelativePath(document.uri)} declares no loop.`);
    return undefined;
  }
  const loop = names.length === 1 ? names[0] : await vscode.window.showQuickPick(names, { title: 'Loopwright: which loop?', placeHolder: 'Loop to run' });
  return loop ? { uri: document.uri.toString(), loop } : undefined;
}

function isCancellation(error: unknown, token: vscode.CancellationToken): boolean {
  return token.isCancellationRequested || error instanceof vscode.CancellationError;
}

function describe(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

export interface RunOptions {
  /** Live re-runs: progress in the status bar only, and no message on failure. */
  quiet?: boolean;
  token?: vscode.CancellationToken;
  /** Called with the reason when a run fails (not when it is cancelled). */
  onFailure?: (message: string) => void;
}

/** A run's report and the version of the document it was computed from, when it is open. */
export interface RunOutcome {
  report: LoopRunReport;
  version?: number;
}

/**
 * Sends `loopwright/run` with a cancellable progress notification. Resolves to the report, or to
 * undefined when the run was cancelled or failed (the user has been told why). The server runs
 * the text of the document's version at the time of the request (the client sends every change
 * before a request), which is the version given back.
 */
export async function runLoop(services: CommandServices, id: PanelIdentity, mode: RunMode, options: RunOptions = {}): Promise<RunOutcome | undefined> {
  const client = await services.server.ready();
  if (!client) {
    options.onFailure?.('the language server is not running');
    if (!options.quiet) {
      void vscode.window.showErrorMessage('Loopwright: the language server is not running, so loops cannot be run. See the "Loopwright" output for details.');
    }
    return undefined;
  }
  const location = options.quiet ? vscode.ProgressLocation.Window : vscode.ProgressLocation.Notification;
  return vscode.window.withProgress({ location, title: RUN_TITLES[mode](id.loop), cancellable: !options.quiet }, async (progress, notificationToken) => {
    const source = new vscode.CancellationTokenSource();
    const links = [notificationToken.onCancellationRequested(() => source.cancel())];
    if (options.token) links.push(options.token.onCancellationRequested(() => source.cancel()));
    const workDoneToken = randomUUID();
    let done = 0;
    links.push(
      client.onProgress(WorkDoneProgress.type, workDoneToken, (value) => {
        if (value.kind === 'end') return;
        const v = value as WorkDoneProgressBegin | WorkDoneProgressReport;
        const increment = typeof v.percentage === 'number' ? Math.max(0, v.percentage - done) : undefined;
        if (typeof v.percentage === 'number') done = Math.max(done, v.percentage);
        progress.report({ message: v.message, increment });
      }),
    );
    const params: RunRequestParams = { uri: id.uri, loop: id.loop, mode, workDoneToken };
    const version = vscode.workspace.textDocuments.find((d) => d.uri.toString() === id.uri)?.version;
    try {
      const report = await client.sendRequest<LoopRunReport>(RunRequest, params, source.token);
      return { report, ...(version !== undefined ? { version } : {}) };
    } catch (error) {
      if (isCancellation(error, source.token)) {
        if (!options.quiet) vscode.window.setStatusBarMessage(`Loopwright: run of ${id.loop} cancelled`, 4000);
      } else {
        options.onFailure?.(describe(error));
        if (!options.quiet) void vscode.window.showErrorMessage(`Loopwright: ${id.loop} could not be run: ${describe(error)}`);
        else services.server.output.warn(`Live run of ${id.loop} failed: ${describe(error)}`);
      }
      return undefined;
    } finally {
      for (const l of links) l.dispose();
      source.dispose();
    }
  });
}

async function runAndShow(services: CommandServices, args: unknown[], mode: RunMode): Promise<void> {
  if (!(await requireTrust('running a loop'))) return;
  const id = await resolveTarget(args);
  if (!id) return;
  const open = services.panels.get(id);
  open?.status('running', RUN_TITLES[mode](id.loop));
  let failure: string | undefined;
  const run = await runLoop(services, id, mode, { onFailure: (m) => (failure = m) });
  if (run) services.panels.show(id, run.report, mode, run.version);
  if (open) open.status(failure ? 'error' : 'idle', failure);
}

/** The last report of the loop, or a fresh simulation when the loop has not been run yet. */
async function reportFor(services: CommandServices, id: PanelIdentity): Promise<LoopRunReport | undefined> {
  const last = services.panels.get(id)?.report;
  if (last) return last;
  const run = await runLoop(services, id, 'simulate');
  if (run) services.panels.show(id, run.report, 'simulate', run.version);
  return run?.report;
}

export async function exportCsvText(id: PanelIdentity, csv: string): Promise<void> {
  const written = await saveFile(
    { name: `${fileStem(id.loop)}.csv`, filters: { CSV: ['csv'] }, title: `Export the runs of ${id.loop} as CSV`, near: vscode.Uri.parse(id.uri) },
    textBytes(csv),
  );
  if (written) vscode.window.setStatusBarMessage(`Loopwright: wrote ${vscode.workspace.asRelativePath(written)}`, 5000);
}

async function exportCsv(services: CommandServices, args: unknown[]): Promise<void> {
  if (!(await requireTrust('exporting runs'))) return;
  const id = await resolveTarget(args);
  if (!id) return;
  const report = await reportFor(services, id);
  if (report) await exportCsvText(id, reportToCsv(report));
}

async function openReport(services: CommandServices, args: unknown[]): Promise<void> {
  if (!(await requireTrust('writing a report'))) return;
  const build = services.reportHtml;
  if (!build) {
    void vscode.window.showErrorMessage('Loopwright: HTML reports are not available in this build.');
    return;
  }
  const id = await resolveTarget(args);
  if (!id) return;
  const report = await reportFor(services, id);
  if (!report) return;
  const written = await saveFile(
    { name: `${fileStem(id.loop)}-report.html`, filters: { HTML: ['html'] }, title: `Write the report of ${id.loop}`, near: vscode.Uri.parse(id.uri) },
    textBytes(await build(report)),
  );
  if (!written) return;
  const open = 'Open in Browser';
  const choice = await vscode.window.showInformationMessage(`Loopwright: report written to ${vscode.workspace.asRelativePath(written)}.`, open);
  if (choice === open) await vscode.env.openExternal(written);
}

/** Wraps a command so that no exception escapes into the workbench as an unhandled error. */
function guarded(name: string, services: CommandServices, body: (...args: unknown[]) => Promise<void>): (...args: unknown[]) => Promise<void> {
  return async (...args) => {
    try {
      await body(...args);
    } catch (error) {
      services.server.output.error(`${name} failed: ${describe(error)}`);
      void vscode.window.showErrorMessage(`Loopwright: ${describe(error)}`);
    }
  };
}

export function registerCommands(services: CommandServices): vscode.Disposable[] {
  const table: Array<[string, (...args: unknown[]) => Promise<void>]> = [
    [Commands.simulate, (...a) => runAndShow(services, a, 'simulate')],
    [Commands.compareLinear, (...a) => runAndShow(services, a, 'compare')],
    [Commands.sweep, (...a) => runAndShow(services, a, 'sweep')],
    [Commands.exportCsv, (...a) => exportCsv(services, a)],
    [Commands.openReport, (...a) => openReport(services, a)],
  ];
  return table.map(([id, body]) => vscode.commands.registerCommand(id, guarded(id, services, body)));
}
