#!/usr/bin/env bash
# Installs a headless VS Code workbench for the editor end-to-end test: Debian's Chromium plus
# code-server (from the npm registry, run on the Node 24 it brings along). Idempotent: each part
# is skipped when it is already in place. Prints the code-server path on its last line.
#
#   EDITOR_SANDBOX_DIR   where code-server lives (default: $HOME/.cache/editor-sandbox)
set -euo pipefail

T="${EDITOR_SANDBOX_DIR:-$HOME/.cache/editor-sandbox}"
CODE_SERVER_VERSION=4.139.1
NODE_VERSION=24
APT_PACKAGES=(chromium libkrb5-dev libsecret-1-dev libx11-dev libxkbfile-dev pkg-config)

log() { echo "editor-sandbox: $*" >&2; }

# --- Debian packages -------------------------------------------------------------------------
missing=()
for p in "${APT_PACKAGES[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed' || missing+=("$p")
done
if [ "${#missing[@]}" -gt 0 ]; then
  SUDO=""
  [ "$(id -u)" -ne 0 ] && SUDO="sudo"
  log "installing Debian packages: ${missing[*]}"
  $SUDO apt-get -o DPkg::Lock::Timeout=900 update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get -o DPkg::Lock::Timeout=900 install -y -qq "${missing[@]}" >&2
fi
[ -x /usr/bin/chromium ] || { log "/usr/bin/chromium is missing after the install"; exit 1; }

# --- code-server -------------------------------------------------------------------------------
CS="$T/node_modules/.bin/code-server"
installed_version() {
  node -e "try{console.log(require('$T/node_modules/code-server/package.json').version)}catch{}" 2>/dev/null || true
}
if [ -x "$CS" ] && [ "$(installed_version)" = "$CODE_SERVER_VERSION" ] \
   && "$T/node_modules/node/bin/node" --version >/dev/null 2>&1; then
  log "code-server $CODE_SERVER_VERSION already installed in $T"
else
  mkdir -p "$T"
  cd "$T"
  # A half-finished earlier try leaves a tree that a second install does not repair.
  rm -rf node_modules package-lock.json
  [ -f package.json ] || npm init -y >/dev/null
  log "installing node@$NODE_VERSION into $T"
  npm i "node@$NODE_VERSION" --no-audit --no-fund >&2
  export PATH="$T/node_modules/node/bin:$PATH"
  log "installing code-server@$CODE_SERVER_VERSION (native builds take a few minutes)"
  npm i "code-server@$CODE_SERVER_VERSION" --foreground-scripts --no-audit --no-fund >&2
  [ -x "$CS" ] || { log "code-server did not install"; exit 1; }
fi
echo "$CS"
