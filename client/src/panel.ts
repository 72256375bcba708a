// The plot panels: one webview panel per loop, reused by later runs of that loop, restored by the
// serializer after a window reload. The page itself (HTML, script, messages) lives in page.ts and
// client/media/; this file only hosts it.
import * as vscode from 'vscode';
import type { Span } from '../../language/src/diagnostics';
import type { LoopRunReport, RunMode } from '../../language/src/protocol';
import { loopNamesInText } from './loops';
import { createNonce, MEDIA_FILES, plotPageHtml } from './page';
import { parsePageMessage, parseState, type HostToPage, type StatusKind } from '../media/messages';

export const VIEW_TYPE = 'loopwright.report';

export interface PanelHost {
  exportCsv(panel: ReportPanel, csv: string): Promise<void>;
  exportPng(panel: ReportPanel, dataUrl: string): Promise<void>;
  /** A knob moved: replace the literal at `span` of the panel's document with `newText`. */
  editParam(panel: ReportPanel, edit: { span: Span; newText: string; final: boolean }): Promise<void>;
  log(message: string): void;
}

/** What a restored panel needs: which loop of which document, and its last report. */
export interface PanelIdentity {
  uri: string;
  loop: string;
}

export function panelKey(id: PanelIdentity): string {
  return `${id.uri}#${id.loop}`;
}

/**
 * Where a restored panel belongs. The page keeps its report with setState; the host adds `uri` and
 * `loop` next to it. Without them the report's own `file` and `loop` are used.
 */
export function identityFromState(state: unknown): { uri?: string; loop: string; report?: LoopRunReport } | undefined {
  if (!state || typeof state !== 'object') return undefined;
  const s = state as { uri?: unknown; loop?: unknown };
  const report = parseState(state)?.report;
  const loop = typeof s.loop === 'string' ? s.loop : report?.loop;
  if (typeof loop !== 'string' || !loop) return undefined;
  let uri = typeof s.uri === 'string' && s.uri ? s.uri : report?.file || undefined;
  if (uri && !/^[a-z][a-z0-9+.-]+:/i.test(uri)) uri = vscode.Uri.file(uri).toString();
  return { uri, loop, report };
}

/** The document declaring a loop of that name: open documents first, then the workspace. */
async function findLoopDocument(loop: string): Promise<string | undefined> {
  const declares = (text: string) => loopNamesInText(text).includes(loop);
  const open = vscode.workspace.textDocuments.find((d) => d.languageId === 'loop' && declares(d.getText()));
  if (open) return open.uri.toString();
  for (const uri of await vscode.workspace.findFiles('**/*.loop', '**/node_modules/**', 500)) {
    try {
      if (declares(new TextDecoder().decode(await vscode.workspace.fs.readFile(uri)))) return uri.toString();
    } catch {
      // unreadable: try the next one
    }
  }
  return undefined;
}

export class ReportPanel implements vscode.Disposable {
  report: LoopRunReport | undefined;
  private reportVersion: number | undefined;
  mode: RunMode = 'simulate';
  private pageReady = false;
  private disposed = false;
  private readonly disposables: vscode.Disposable[] = [];
  private readonly onDisposeEmitter = new vscode.EventEmitter<void>();
  readonly onDidDispose = this.onDisposeEmitter.event;

  constructor(
    readonly id: PanelIdentity,
    readonly panel: vscode.WebviewPanel,
    private readonly extensionUri: vscode.Uri,
    private readonly mediaRoot: vscode.Uri,
    private readonly host: PanelHost,
  ) {
    panel.webview.options = { enableScripts: true, localResourceRoots: [mediaRoot] };
    this.disposables.push(
      panel.webview.onDidReceiveMessage((m: unknown) => this.receive(m)),
      panel.onDidDispose(() => this.dispose()),
    );
    this.render();
  }

  get documentUri(): vscode.Uri {
    return vscode.Uri.parse(this.id.uri);
  }

  /** A fresh page with a fresh nonce; the report is posted again once the page says it is ready. */
  render(): void {
    this.pageReady = false;
    const webview = this.panel.webview;
    const asset = (path: string) => webview.asWebviewUri(vscode.Uri.joinPath(this.extensionUri, path)).toString();
    webview.html = plotPageHtml({
      assets: { script: asset(MEDIA_FILES.script), style: asset(MEDIA_FILES.style), uplotStyle: asset(MEDIA_FILES.uplotStyle) },
      nonce: createNonce(),
      cspSource: webview.cspSource,
      title: `${this.id.loop} — Loopwright`,
    });
  }

  /**
   * Shows a report: at once if the page is ready, else when it says so. `version`: the document
   * version it was computed from (live and command runs), so the page's knobs can tell whether
   * it already holds their edits.
   */
  show(report: LoopRunReport, mode: RunMode, version?: number): void {
    this.report = report;
    this.reportVersion = version;
    this.mode = mode;
    this.post();
  }

  reveal(): void {
    this.panel.reveal(undefined, true);
  }

  /** Tells the page that a run is going on, has finished, or failed (`line`: 1-based, of the first error). */
  status(kind: StatusKind, message?: string, line?: number): void {
    this.send({ type: 'status', kind, message, ...(line !== undefined && Number.isInteger(line) && line >= 1 ? { line } : {}) });
  }

  /** Redraw with the colours of the new theme. */
  themeChanged(): void {
    this.send({ type: 'theme' });
  }

  private send(message: HostToPage): void {
    if (this.pageReady && !this.disposed) void this.panel.webview.postMessage(message);
  }

  private post(): void {
    if (this.report) this.send({ type: 'report', report: this.report, ...(this.reportVersion !== undefined ? { version: this.reportVersion } : {}) });
  }

  /** The version of the panel's document, when it is open. */
  private documentVersion(): number | undefined {
    const uri = this.documentUri.toString();
    return vscode.workspace.textDocuments.find((d) => d.uri.toString() === uri)?.version;
  }

  private async receive(data: unknown): Promise<void> {
    const parsed = parsePageMessage(data);
    if (!parsed.ok) {
      this.host.log(`Plot panel of ${this.id.loop} sent a message that was ignored: ${parsed.error}`);
      return;
    }
    const message = parsed.value;
    try {
      switch (message.type) {
        case 'ready':
          this.pageReady = true;
          this.post();
          break;
        case 'exportCsv':
          await this.host.exportCsv(this, message.csv);
          break;
        case 'exportPng':
          await this.host.exportPng(this, message.dataUrl);
          break;
        case 'error':
          this.host.log(`Plot panel of ${this.id.loop}: ${message.message}`);
          break;
        case 'editParam':
          try {
            await this.host.editParam(this, message);
          } finally {
            // applied or dropped: the page learns the version it left (see knobs.ts)
            const version = this.documentVersion();
            if (version !== undefined) this.send({ type: 'edited', version });
          }
          break;
      }
    } catch (error) {
      void vscode.window.showErrorMessage(`Loopwright: ${error instanceof Error ? error.message : String(error)}`);
    }
  }

  dispose(): void {
    if (this.disposed) return;
    this.disposed = true;
    for (const d of this.disposables.splice(0)) d.dispose();
    this.onDisposeEmitter.fire();
    this.onDisposeEmitter.dispose();
    this.panel.dispose();
  }
}

/** A panel opened, closed or changed what it shows: the server watches the loops of open panels. */
export interface WatchChange {
  id: PanelIdentity;
  open: boolean;
  mode: RunMode;
}

/** All open plot panels, one per loop of a document. */
export class ReportPanels implements vscode.WebviewPanelSerializer<unknown>, vscode.Disposable {
  private readonly panels = new Map<string, ReportPanel>();
  private readonly mediaRoot: vscode.Uri;
  private readonly watchEmitter = new vscode.EventEmitter<WatchChange>();
  readonly onDidChangeWatch = this.watchEmitter.event;

  constructor(
    private readonly extensionUri: vscode.Uri,
    private readonly host: PanelHost,
  ) {
    this.mediaRoot = vscode.Uri.joinPath(extensionUri, 'dist', 'media');
  }

  get(id: PanelIdentity): ReportPanel | undefined {
    return this.panels.get(panelKey(id));
  }

  forDocument(uri: string): ReportPanel[] {
    return [...this.panels.values()].filter((p) => p.id.uri === uri);
  }

  all(): ReportPanel[] {
    return [...this.panels.values()];
  }

  /**
   * Opens the loop's panel (or brings back the open one) and shows the report in it (`version`:
   * of the document it was computed from).
   */
  show(id: PanelIdentity, report: LoopRunReport, mode: RunMode, version?: number): ReportPanel {
    let panel = this.get(id);
    if (panel) {
      panel.reveal();
    } else {
      const webviewPanel = vscode.window.createWebviewPanel(
        VIEW_TYPE,
        `${id.loop} — Loopwright`,
        { viewColumn: vscode.ViewColumn.Beside, preserveFocus: true },
        { enableScripts: true, localResourceRoots: [this.mediaRoot] },
      );
      panel = this.adopt(id, webviewPanel);
    }
    const changed = panel.report === undefined || panel.mode !== mode;
    panel.show(report, mode, version);
    if (changed) this.watchEmitter.fire({ id, open: true, mode });
    return panel;
  }

  private adopt(id: PanelIdentity, webviewPanel: vscode.WebviewPanel): ReportPanel {
    webviewPanel.iconPath = vscode.Uri.joinPath(this.extensionUri, 'images', 'icon.png');
    const panel = new ReportPanel(id, webviewPanel, this.extensionUri, this.mediaRoot, this.host);
    const key = panelKey(id);
    this.panels.get(key)?.dispose();
    this.panels.set(key, panel);
    panel.onDidDispose(() => {
      if (this.panels.get(key) !== panel) return;
      this.panels.delete(key);
      this.watchEmitter.fire({ id, open: false, mode: panel.mode });
    });
    return panel;
  }

  /** After a reload: the page kept its report with setState; show it again. */
  async deserializeWebviewPanel(webviewPanel: vscode.WebviewPanel, state: unknown): Promise<void> {
    const restored = identityFromState(state);
    const uri = restored && (restored.uri ?? (await findLoopDocument(restored.loop)));
    if (!restored || !uri) {
      // Nothing to show and no loop to re-run: close rather than leave an empty panel.
      webviewPanel.dispose();
      return;
    }
    const id = { uri, loop: restored.loop };
    const panel = this.adopt(id, webviewPanel);
    if (restored.report) panel.show(restored.report, 'simulate');
    this.watchEmitter.fire({ id, open: true, mode: panel.mode });
  }

  themeChanged(): void {
    for (const p of this.panels.values()) p.themeChanged();
  }

  dispose(): void {
    for (const p of [...this.panels.values()]) p.dispose();
    this.panels.clear();
    this.watchEmitter.dispose();
  }
}
