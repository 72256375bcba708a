// The Loopwright language server. Transport from argv (--stdio, --node-ipc, --socket=N), as
// createConnection does; documents synced incrementally; one analysis per document version
// (documents.ts) shared by every request. Diagnostics are pushed, debounced per document
// (diagnostics.ts). Every handler is guarded (guard.ts): a failure answers empty and is logged.
// Features compute in offsets and strings; convert.ts turns their results into LSP types.

import {
  CodeActionKind,
  createConnection,
  ProposedFeatures,
  ResponseError,
  ErrorCodes,
  TextDocuments,
  TextDocumentSyncKind,
  type CodeAction,
  type InitializeResult,
  type SemanticTokens,
} from 'vscode-languageserver/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { RunRequest, type LoopRunReport, type RunRequestParams } from '../../language/src/protocol';
import { format } from '../../language/src/format/format';
import { compileAnalysis } from '../../language/src/model/compile';
import { quickFixes } from './actions';
import { completions } from './completion';
import {
  toCodeLens,
  toCompletionItem,
  toDiagnostic,
  toDocumentSymbol,
  toFoldingRanges,
  toHover,
  toInlayHint,
  toLocation,
  toPrepareRename,
  toQuickFix,
  toSemanticTokens,
  toTextEdit,
  toWorkspaceEdit,
} from './convert';
import { definition, references } from './definition';
import { collectDiagnostics, PushScheduler } from './diagnostics';
import { AnalysisStore, type DocState } from './documents';
import { foldingRanges } from './folding';
import { guard, guardNotification, logError, setLogger, yieldToEventLoop } from './guard';
import { hover } from './hover';
import { inlayHints } from './inlay';
import { modelDiagnostics, operatingPointDiagnostics } from './layers';
import { codeLenses } from './lens';
import { prepareRename, rename } from './rename';
import { runInWorker, warmRunWorkers } from './runs';
import { LiveRuns } from './live';
import { LiveReportNotification, LiveStatusNotification, WatchNotification } from './live-protocol';
import { LEGEND, semanticTokens } from './semantic';
import { Settings } from './settings';
import { outline } from './symbols';

const connection = createConnection(ProposedFeatures.all);
const documents = new TextDocuments(TextDocument);
const store = new AnalysisStore((uri) => documents.get(uri));
const settings = new Settings();
let trusted = true;
let canPullConfiguration = false;

setLogger((m) => connection.console.error(m));
process.on('uncaughtException', (err) => logError('uncaught', err));
process.on('unhandledRejection', (err) => logError('unhandled rejection', err));

// ---------- lifecycle ----------

connection.onInitialize((params): InitializeResult => {
  const init = (params.initializationOptions ?? {}) as { trusted?: unknown; settings?: unknown };
  trusted = init.trusted !== false;
  settings.update(init.settings);
  canPullConfiguration = !!params.capabilities.workspace?.configuration;
  return {
    capabilities: {
      textDocumentSync: { openClose: true, change: TextDocumentSyncKind.Incremental },
      hoverProvider: true,
      codeLensProvider: { resolveProvider: false },
      inlayHintProvider: { resolveProvider: false },
      completionProvider: { triggerCharacters: ['.', '['], resolveProvider: false },
      definitionProvider: true,
      referencesProvider: true,
      renameProvider: { prepareProvider: true },
      documentSymbolProvider: true,
      semanticTokensProvider: { legend: LEGEND, full: true, range: false },
      foldingRangeProvider: true,
      documentFormattingProvider: true,
      codeActionProvider: { codeActionKinds: [CodeActionKind.QuickFix] },
    },
    serverInfo: { name: 'loopwright', version: '0.1.0' },
  };
});

connection.onInitialized(() => {
  if (canPullConfiguration) void pullConfiguration();
});

async function pullConfiguration(): Promise<void> {
  try {
    settings.update(await connection.workspace.getConfiguration('loopwright'));
  } catch (err) {
    logError('workspace/configuration', err);
  }
}

connection.onDidChangeConfiguration(
  guardNotification('didChangeConfiguration', (p) => {
    const s = (p?.settings as { loopwright?: unknown } | undefined)?.loopwright;
    if (s) settings.update(s);
    else if (canPullConfiguration) void pullConfiguration();
    if (!settings.liveEnabled()) live.stopAll();
  }),
);

connection.onNotification(
  'loopwright/trust',
  guardNotification('loopwright/trust', (p: { trusted?: unknown }) => {
    const next = p?.trusted !== false;
    if (next !== trusted) {
      trusted = next;
      if (!trusted) live.stopAll();
      void connection.sendRequest('workspace/codeLens/refresh').catch(() => undefined);
    }
  }),
);

// ---------- diagnostics ----------

const EXTRA_CHECKS = [operatingPointDiagnostics, modelDiagnostics];

// Two phases: the front end's diagnostics go out at once; those of the model and linear layers
// (which compile every loop) follow in a second message, unless the document changed meanwhile.
const pushes = new PushScheduler((uri) => {
  try {
    const state = store.get(uri);
    if (!state) return;
    const front = collectDiagnostics(state);
    void connection.sendDiagnostics({ uri, version: state.version, diagnostics: front.map((d) => toDiagnostic(d, state.lines, uri)) });
    void laterPhase(uri, state, front.length);
  } catch (err) {
    logError('diagnostics', err);
  }
});

/** Compiles the loops one at a time, yielding between them; gives up as soon as the document changes. */
async function laterPhase(uri: string, state: DocState, frontCount: number): Promise<void> {
  try {
    const current = () => store.peek(uri) === state;
    for (const name of state.analysis.symbols.loops.keys()) {
      await yieldToEventLoop();
      if (!current()) return;
      if (state.analysis.diagnostics.some((d) => d.severity === 'error')) break;
      compileAnalysis(state.analysis, name);
    }
    await yieldToEventLoop();
    if (!current()) return;
    const all = collectDiagnostics(state, EXTRA_CHECKS);
    if (all.length === frontCount) return;
    void connection.sendDiagnostics({ uri, version: state.version, diagnostics: all.map((d) => toDiagnostic(d, state.lines, uri)) });
  } catch (err) {
    logError('diagnostics (model)', err);
  }
}

// ---------- live runs ----------

const live = new LiveRuns({
  state: (uri) => store.get(uri),
  version: (uri) => documents.get(uri)?.version,
  enabled: () => trusted && settings.liveEnabled(),
  job: (text, loop, mode) => ({ text, loop, mode, budgetMs: settings.timeBudgetMs(), settings: settings.runDefaults() }),
  run: (job, token) => runInWorker(job, settings.timeBudgetMs(), token, { report: () => undefined }),
  report: (p) => void connection.sendNotification(LiveReportNotification, p).catch(() => undefined),
  status: (p) => void connection.sendNotification(LiveStatusNotification, p).catch(() => undefined),
  log: logError,
});

connection.onNotification(
  WatchNotification,
  guardNotification(WatchNotification, (p: unknown) => live.watch(p)),
);

documents.onDidOpen((e) => {
  pushes.now(e.document.uri);
  // a loop file is open: the first run will find a run worker started (see RunWorkers)
  if (trusted) warmRunWorkers();
});
documents.onDidChangeContent((e) => {
  // onDidChangeContent also fires on open; the open handler has pushed already.
  if (e.document.version === store.peek(e.document.uri)?.version) return;
  pushes.later(e.document.uri);
  live.changed(e.document.uri);
});
documents.onDidClose((e) => {
  pushes.cancel(e.document.uri);
  live.closed(e.document.uri);
  store.forget(e.document.uri);
  void connection.sendDiagnostics({ uri: e.document.uri, diagnostics: [] });
});

// ---------- requests ----------

connection.onHover(
  guard('hover', null, (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return null;
    const h = hover(s.analysis, s.lines.offset(p.position));
    return h ? toHover(h, s.lines) : null;
  }),
);

connection.onCodeLens(
  guard('codeLens', [], (p) => {
    if (!trusted) return [];
    const s = store.get(p.textDocument.uri);
    if (!s) return [];
    const good = store.lastGood(p.textDocument.uri);
    return codeLenses(p.textDocument.uri, s.analysis, good?.analysis, s.clean).map((l) => toCodeLens(l, s.lines));
  }),
);

connection.languages.inlayHint.on(
  guard('inlayHint', [], (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return [];
    return inlayHints(s.analysis, s.lines.spanOf(p.range)).map((h) => toInlayHint(h, s.lines));
  }),
);

connection.onCompletion(
  guard('completion', [], (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return [];
    return completions(s.analysis, s.lines.offset(p.position)).map(toCompletionItem);
  }),
);

connection.onDefinition(
  guard('definition', null, (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return null;
    const span = definition(s.analysis, s.lines.offset(p.position));
    return span ? toLocation(p.textDocument.uri, span, s.lines) : null;
  }),
);

connection.onReferences(
  guard('references', [], (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return [];
    return references(s.analysis, s.lines.offset(p.position), p.context?.includeDeclaration !== false).map((span) => toLocation(p.textDocument.uri, span, s.lines));
  }),
);

connection.onPrepareRename(
  guard('prepareRename', null, (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return null;
    const r = prepareRename(s.analysis, s.lines.offset(p.position));
    if (!r.ok) throw new ResponseError(ErrorCodes.InvalidRequest, r.reason);
    return toPrepareRename(r.span, r.placeholder, s.lines);
  }),
);

connection.onRenameRequest(
  guard('rename', null, (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return null;
    if (typeof p.newName !== 'string') throw new ResponseError(ErrorCodes.InvalidParams, 'the new name must be a string');
    const r = rename(s.analysis, s.lines.offset(p.position), p.newName);
    if (!r.ok) throw new ResponseError(ErrorCodes.InvalidRequest, r.reason);
    return toWorkspaceEdit(p.textDocument.uri, r.edits, s.lines);
  }),
);

connection.onDocumentSymbol(
  guard('documentSymbol', [], (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return [];
    return outline(s.analysis).map((n) => toDocumentSymbol(n, s.lines));
  }),
);

connection.languages.semanticTokens.on(
  guard('semanticTokens', { data: [] }, (p, token) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return { data: [] };
    // One encoding per version: the editor asks again on every focus and scroll.
    const cached = s.analysis.cache.get('server:semanticTokens') as SemanticTokens | undefined;
    if (cached) return cached;
    const toks = semanticTokens(s.analysis, () => token.isCancellationRequested);
    if (!toks) return { data: [] };
    const encoded = toSemanticTokens(toks, s.lines);
    s.analysis.cache.set('server:semanticTokens', encoded);
    return encoded;
  }),
);

connection.onFoldingRanges(
  guard('foldingRange', [], (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return [];
    return toFoldingRanges(foldingRanges(s.analysis), s.lines);
  }),
);

connection.onDocumentFormatting(
  guard('formatting', null, (p) => {
    const s = store.get(p.textDocument.uri);
    if (!s) return null;
    const r = format(s.analysis.text);
    if (!r.ok) throw new ResponseError(ErrorCodes.InvalidRequest, `not formatted: ${r.reason}`);
    if (r.text === s.analysis.text) return [];
    return [toTextEdit({ span: { start: 0, end: s.analysis.text.length }, newText: r.text }, s.lines)];
  }),
);

connection.onCodeAction(
  guard('codeAction', [] as CodeAction[], (p) => {
    const uri = p.textDocument.uri;
    const s = store.get(uri);
    if (!s) return [];
    const diags = collectDiagnostics(s, EXTRA_CHECKS);
    const asked = (p.context?.diagnostics ?? [])
      .filter((d) => d.source === 'loopwright' && typeof d.code === 'string')
      .map((d) => ({ code: String(d.code), span: s.lines.spanOf(d.range) }));
    return quickFixes(s, diags, s.lines.spanOf(p.range), asked).map((f) => toQuickFix(f.fix, toDiagnostic(f.diagnostic, s.lines, uri), uri, s.lines));
  }),
);

// ---------- runs ----------

connection.onRequest(RunRequest, async (params: RunRequestParams, token): Promise<LoopRunReport | ResponseError<void>> => {
  try {
    if (!trusted) return new ResponseError(ErrorCodes.InvalidRequest, 'loops are not run in an untrusted workspace');
    const doc = params && typeof params.uri === 'string' ? documents.get(params.uri) : undefined;
    if (!doc) return new ResponseError(ErrorCodes.InvalidParams, `the document ${String(params?.uri)} is not open`);
    if (typeof params.loop !== 'string' || !params.loop) return new ResponseError(ErrorCodes.InvalidParams, 'no loop named in the request');
    const mode = params.mode === 'compare' || params.mode === 'sweep' ? params.mode : 'simulate';
    const progress = params.workDoneToken !== undefined ? connection.window.attachWorkDoneProgress(params.workDoneToken) : undefined;
    progress?.begin(`Running ${params.loop}`, 0, undefined, true);
    try {
      return await runInWorker({ text: doc.getText(), loop: params.loop, mode, budgetMs: settings.timeBudgetMs(), settings: settings.runDefaults() }, settings.timeBudgetMs(), token, {
        report: (pct, msg) => progress?.report(pct ?? 0, msg),
      });
    } finally {
      progress?.done();
    }
  } catch (err) {
    if (err instanceof ResponseError) return err;
    logError('loopwright/run', err);
    return new ResponseError(ErrorCodes.InternalError, `the run failed: ${(err as Error)?.message ?? String(err)}`);
  }
});

documents.listen(connection);
connection.listen();
