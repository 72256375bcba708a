// A code-server for the test: installed on demand by scripts/editor-sandbox.sh, run on 127.0.0.1
// with a free port, fresh user-data and extensions folders, and stopped by its process id.
import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { copyFileSync, createWriteStream, existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { homedir, tmpdir } from 'node:os';
import { join } from 'node:path';

export const SANDBOX = process.env.EDITOR_SANDBOX_DIR ?? join(homedir(), '.cache', 'editor-sandbox');
const CODE_SERVER = join(SANDBOX, 'node_modules', '.bin', 'code-server');
const NODE_BIN = join(SANDBOX, 'node_modules', 'node', 'bin');
export const CHROMIUM = '/usr/bin/chromium';

/** Installs Chromium and code-server when they are missing (minutes on the first run). */
export function ensureSandbox(root: string): void {
  if (existsSync(CODE_SERVER) && existsSync(join(NODE_BIN, 'node')) && existsSync(CHROMIUM)) return;
  execFileSync('bash', [join(root, 'scripts', 'editor-sandbox.sh')], { cwd: root, stdio: ['ignore', 'pipe', 'inherit'] });
}

function env(): NodeJS.ProcessEnv {
  return { ...process.env, PATH: `${NODE_BIN}:${process.env.PATH ?? ''}` };
}

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.unref();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const address = srv.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      srv.close(() => resolve(port));
    });
  });
}

export interface RunningCodeServer {
  url: string;
  port: number;
  userData: string;
  extensions: string;
  logFile: string;
  process: ChildProcess;
  stop(): Promise<void>;
}

export const SETTINGS = {
  'security.workspace.trust.enabled': false,
  'workbench.startupEditor': 'none',
  'chat.disableAIFeatures': true,
  'workbench.secondarySideBar.defaultVisibility': 'hidden',
  'workbench.tips.enabled': false,
  'workbench.enableExperiments': false,
  'extensions.autoCheckUpdates': false,
  'extensions.autoUpdate': false,
  'telemetry.telemetryLevel': 'off',
  'update.mode': 'none',
  'editor.codeLens': true,
  'editor.hover.delay': 200,
  'files.autoSave': 'off',
};

/** Installs the .vsix into a fresh extensions folder; returns the installed extension ids. */
export function installExtension(vsix: string, userData: string, extensions: string): string[] {
  execFileSync(CODE_SERVER, ['--user-data-dir', userData, '--extensions-dir', extensions, '--install-extension', vsix, '--force'], { env: env(), stdio: 'pipe' });
  const listed = execFileSync(CODE_SERVER, ['--user-data-dir', userData, '--extensions-dir', extensions, '--list-extensions'], { env: env(), encoding: 'utf8' });
  return listed.split('\n').map((l) => l.trim()).filter(Boolean);
}

/** Copies the extension host's logs (ours among them) next to the screenshots. */
function collectLogs(userData: string, logDir: string): void {
  const walk = (dir: string): string[] =>
    readdirSync(dir).flatMap((n) => {
      const p = join(dir, n);
      return statSync(p).isDirectory() ? walk(p) : [p];
    });
  const logs = join(userData, 'logs');
  if (!existsSync(logs)) return;
  for (const f of walk(logs)) {
    if (/loopwright\.loopwright[\\/]|remoteexthost\.log$/.test(f)) copyFileSync(f, join(logDir, f.replace(/^.*[\\/]/, '')));
  }
}

async function waitForHealth(url: string, child: ChildProcess, logFile: string): Promise<void> {
  const deadline = Date.now() + 60_000;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`code-server exited with ${child.exitCode}; see ${logFile}`);
    try {
      const res = await fetch(`${url}/healthz`);
      if (res.ok) return;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`code-server did not answer on ${url} within a minute; see ${logFile}`);
}

export async function startCodeServer(options: { vsix: string; workspace: string; logDir: string }): Promise<RunningCodeServer & { installed: string[] }> {
  const base = mkdtempSync(join(tmpdir(), 'loopwright-editor-'));
  const userData = join(base, 'user-data');
  const extensions = join(base, 'extensions');
  mkdirSync(join(userData, 'User'), { recursive: true });
  mkdirSync(extensions, { recursive: true });
  writeFileSync(join(userData, 'User', 'settings.json'), JSON.stringify(SETTINGS, null, 2));
  // An empty config file of our own, so that no config of the machine's user is read.
  const config = join(base, 'config.yaml');
  writeFileSync(config, '');
  const installed = installExtension(options.vsix, userData, extensions);

  const port = await freePort();
  const url = `http://127.0.0.1:${port}`;
  mkdirSync(options.logDir, { recursive: true });
  const logFile = join(options.logDir, 'code-server.log');
  const log = createWriteStream(logFile);
  const child = spawn(
    CODE_SERVER,
    ['--config', config, '--auth', 'none', '--bind-addr', `127.0.0.1:${port}`, '--user-data-dir', userData, '--extensions-dir', extensions,
      '--disable-telemetry', '--disable-update-check', options.workspace],
    { env: env(), detached: true, stdio: ['ignore', 'pipe', 'pipe'] },
  );
  child.stdout?.pipe(log);
  child.stderr?.pipe(log);

  const stop = async () => {
    await stopProcess();
    try {
      collectLogs(userData, options.logDir);
    } catch {
      // logs are a help, not a result
    }
    rmSync(base, { recursive: true, force: true });
  };
  const stopProcess = async () => {
    if (child.exitCode !== null || child.pid === undefined) return;
    const exited = new Promise<void>((r) => child.once('exit', () => r()));
    // code-server runs the workbench server and the extension hosts as children in its own
    // process group (detached above): stop that group, which holds only what this test started.
    try {
      process.kill(-child.pid, 'SIGTERM');
    } catch {
      return;
    }
    const timer = setTimeout(() => {
      try {
        process.kill(-child.pid!, 'SIGKILL');
      } catch {
        // already gone
      }
    }, 5000);
    await exited;
    clearTimeout(timer);
  };

  try {
    await waitForHealth(url, child, logFile);
  } catch (error) {
    await stop();
    throw error;
  }
  return { url, port, userData, extensions, logFile, process: child, stop, installed };
}
