// Knob edits from the plot page (`editParam`): each replaces a literal's span in the panel's
// document. Edits are applied one after another in the order they arrived (the page has already
// shifted each span by the edits before it). A drag is one undo step: its edits go through the
// visible editor of the document with no undo stop between them, and the final one closes the
// step (tuning.ts UndoGroups). Without a visible editor an edit is a plain WorkspaceEdit. When the
// document changes between two edits of a drag (an undo, typing), the rest of the drag is dropped:
// the user's own change is never written over by a late frame of the drag.
import * as vscode from 'vscode';
import type { Span } from '../../language/src/diagnostics';
import { panelKey, type ReportPanel } from './panel';
import { refuseKnobEdit, UndoGroups } from './tuning';

export interface KnobEdit {
  span: Span;
  newText: string;
  final: boolean;
}

export class KnobEditor {
  private queue: Promise<void> = Promise.resolve();
  private readonly groups = new UndoGroups();
  /** Panels whose current drag was refused: its later frames are dropped, the release ends it. */
  private readonly refused = new Set<string>();

  constructor(private readonly log: (message: string) => void) {}

  /** Queues the edit behind the ones before it; resolves once it is in the document. */
  apply(panel: ReportPanel, edit: KnobEdit): Promise<void> {
    const next = this.queue.then(() => this.applyNow(panel, edit));
    this.queue = next.catch(() => undefined);
    return next;
  }

  private async applyNow(panel: ReportPanel, edit: KnobEdit): Promise<void> {
    const key = panelKey(panel.id);
    if (this.refused.has(key)) {
      if (edit.final) this.refused.delete(key);
      return;
    }
    const document = await vscode.workspace.openTextDocument(panel.documentUri);
    if (this.groups.changedUnder(key, document.version)) {
      // an undo or a typed edit came between two edits of this drag: the user's change wins
      this.groups.close(key);
      if (!edit.final) this.refused.add(key);
      this.log(`A knob drag of ${panel.id.loop} ended early: the document changed during the drag, so the rest of the drag was not applied.`);
      return;
    }
    const why = refuseKnobEdit(document.getText(), edit.span, edit.newText);
    if (why) {
      this.groups.close(key);
      if (!edit.final) this.refused.add(key);
      throw new Error(`the knob edit was not applied: ${why}`);
    }
    const range = new vscode.Range(document.positionAt(edit.span.start), document.positionAt(edit.span.end));
    const stops = this.groups.next(key, edit.final);
    const editor = vscode.window.visibleTextEditors.find((e) => e.document.uri.toString() === document.uri.toString());
    if (editor && (await editor.edit((b) => b.replace(range, edit.newText), stops))) {
      this.groups.landed(key, document.version);
      return;
    }
    if (editor) this.log(`A knob edit of ${panel.id.loop} went through a workspace edit (the editor refused it).`);
    const change = new vscode.WorkspaceEdit();
    change.replace(document.uri, range, edit.newText);
    if (!(await vscode.workspace.applyEdit(change))) throw new Error(`could not change ${vscode.workspace.asRelativePath(document.uri)}`);
    this.groups.landed(key, document.version);
  }
}
