// Workspace trust. Checking and hovers work everywhere; running a loop executes the model's
// expressions and writes files, so it waits until the user trusts the workspace.
import * as vscode from 'vscode';

/** Notification to the server when trust is granted after start: it then shows the run lenses. */
export const TrustNotification = 'loopwright/trust';
export interface TrustParams {
  trusted: boolean;
}

export function isTrusted(): boolean {
  return vscode.workspace.isTrusted;
}

/** True when the action may go ahead; otherwise tells the user why not and how to change it. */
export async function requireTrust(action: string): Promise<boolean> {
  if (vscode.workspace.isTrusted) return true;
  const manage = 'Manage Workspace Trust';
  const choice = await vscode.window.showWarningMessage(
    `Loopwright: ${action} is not available in an untrusted workspace. Units, wiring and hovers still work; trust this workspace to run loops.`,
    manage,
  );
  if (choice === manage) await vscode.commands.executeCommand('workbench.trust.manage');
  return false;
}

/** Calls `notify` once when the workspace becomes trusted during this session. */
export function onTrustGranted(notify: (params: TrustParams) => void): vscode.Disposable {
  return vscode.workspace.onDidGrantWorkspaceTrust(() => notify({ trusted: true }));
}
