// Writing exports chosen by the user: CSV text, PNG images, HTML reports.
import * as vscode from 'vscode';

export { fileStem, pngBytes, textBytes } from './file-names';

export interface SaveRequest {
  /** Suggested file name, without folder. */
  name: string;
  /** Save-dialog filter: label → extensions. */
  filters: Record<string, string[]>;
  title: string;
  /** Folder of the suggestion: the document's folder when it has one. */
  near?: vscode.Uri;
}

function defaultUri(req: SaveRequest): vscode.Uri | undefined {
  const near = req.near;
  if (near && near.scheme === 'file') return vscode.Uri.joinPath(near, '..', req.name);
  const folder = vscode.workspace.workspaceFolders?.[0]?.uri;
  return folder ? vscode.Uri.joinPath(folder, req.name) : undefined;
}

/** Asks for a path and writes the bytes; returns the written file, or undefined when cancelled. */
export async function saveFile(req: SaveRequest, bytes: Uint8Array): Promise<vscode.Uri | undefined> {
  const target = await vscode.window.showSaveDialog({ defaultUri: defaultUri(req), filters: req.filters, title: req.title, saveLabel: 'Export' });
  if (!target) return undefined;
  try {
    await vscode.workspace.fs.writeFile(target, bytes);
    return target;
  } catch (error) {
    void vscode.window.showErrorMessage(`Loopwright: could not write ${target.fsPath}: ${error instanceof Error ? error.message : String(error)}`);
    return undefined;
  }
}
