// Entry point of the extension: the language client, the commands, the plot panels and workspace
// trust. Nothing here may throw out of activate(): a broken server leaves colouring, snippets and
// the language configuration working.
import * as vscode from 'vscode';
import type { LoopRunReport } from '../../language/src/protocol';
import { MEDIA_FILES, reportPageHtml } from './page';
import { registerCommands, exportCsvText, type CommandServices } from './commands';
import { ServerConnection } from './language-client';
import { KnobEditor } from './knob-edits';
import { watchLiveRuns } from './live';
import { ReportPanels, VIEW_TYPE, type PanelHost, type ReportPanel } from './panel';
import { fileStem, pngBytes, saveFile } from './save';
import { isTrusted, onTrustGranted, TrustNotification, requireTrust } from './trust';

let server: ServerConnection | undefined;

function panelHost(output: () => vscode.LogOutputChannel): PanelHost {
  const knobs = new KnobEditor((m) => output().info(m));
  return {
    exportCsv: (panel: ReportPanel, csv: string) => exportCsvText(panel.id, csv),
    async exportPng(panel: ReportPanel, dataUrl: string) {
      const bytes = pngBytes(dataUrl);
      if (!bytes) throw new Error('the plot panel sent an image that is not a PNG');
      const written = await saveFile(
        { name: `${fileStem(panel.id.loop)}.png`, filters: { PNG: ['png'] }, title: `Save the plot of ${panel.id.loop}`, near: panel.documentUri },
        bytes,
      );
      if (written) vscode.window.setStatusBarMessage(`Loopwright: wrote ${vscode.workspace.asRelativePath(written)}`, 5000);
    },
    async editParam(panel: ReportPanel, edit) {
      if (!isTrusted()) {
        await requireTrust('live tuning');
        return;
      }
      await knobs.apply(panel, edit);
    },
    log: (message: string) => output().warn(message),
  };
}

/** One HTML file holding the report, the page script and its styles, to open from disk. */
async function reportHtml(extensionUri: vscode.Uri, report: LoopRunReport): Promise<string> {
  const read = async (path: string) => new TextDecoder().decode(await vscode.workspace.fs.readFile(vscode.Uri.joinPath(extensionUri, path)));
  const [script, uplotStyle, style] = await Promise.all([read(MEDIA_FILES.script), read(MEDIA_FILES.uplotStyle), read(MEDIA_FILES.style)]);
  return reportPageHtml({ report, script, styles: [uplotStyle, style] });
}

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  const connection = new ServerConnection(context);
  server = connection;
  const panels = new ReportPanels(context.extensionUri, panelHost(() => connection.output));
  const services: CommandServices = { server: connection, panels, reportHtml: (report) => reportHtml(context.extensionUri, report) };

  context.subscriptions.push(
    panels,
    ...registerCommands(services),
    vscode.window.registerWebviewPanelSerializer(VIEW_TYPE, panels),
    watchLiveRuns(services),
    onTrustGranted((params) => void connection.notify(TrustNotification, params)),
    vscode.window.onDidChangeActiveColorTheme(() => panels.themeChanged()),
  );

  // Start the server without holding up activation; failures are logged, never thrown.
  void connection.ready().then((client) => {
    if (!client) connection.output.warn('Checking, hovers and code lenses are off: the Loopwright server is not running.');
  });
}

export async function deactivate(): Promise<void> {
  const s = server;
  server = undefined;
  await s?.dispose();
}
