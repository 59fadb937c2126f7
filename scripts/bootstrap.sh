#!/usr/bin/env bash
# Brings a fresh clone to the point where the TypeScript scripts can run, then hands over to them:
# the Debian packages of the local services, the npm packages, then `scripts/<start|test>.ts` under tsx.
# Bash because node_modules (and so tsx) may not exist yet.
set -euo pipefail

mode="${1:-}"
case "$mode" in
  start | test) shift ;;
  *)
    echo "usage: bash scripts/bootstrap.sh start|test [arguments for the script]" >&2
    exit 2
    ;;
esac

repo="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$repo"

pg_bin="${CRACKPOINT_PG_BIN:-/usr/lib/postgresql/15/bin}"
chromium="${CHROMIUM_PATH:-/usr/bin/chromium}"

missing_packages() {
  local missing=()
  if [ ! -x "$pg_bin/initdb" ] || [ ! -x "$pg_bin/pg_ctl" ]; then missing+=(postgresql); fi
  if ! command -v redis-server >/dev/null 2>&1; then missing+=(redis-server); fi
  # Only the browser tests need a browser.
  if [ "$mode" = test ] && [ ! -x "$chromium" ]; then missing+=(chromium); fi
  echo "${missing[*]}"
}

missing="$(missing_packages)"
if [ -n "$missing" ]; then
  install="apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y $missing"
  if [ "$(id -u)" -eq 0 ]; then
    echo "Installing Debian packages: $missing"
    apt-get update
    # shellcheck disable=SC2086 # one word per package
    DEBIAN_FRONTEND=noninteractive apt-get install -y $missing
    still="$(missing_packages)"
    if [ -n "$still" ]; then
      echo "Still missing after the install: $still." >&2
      echo "PostgreSQL's server programs are expected in $pg_bin (set CRACKPOINT_PG_BIN to another folder," >&2
      echo "e.g. one listed by 'ls /usr/lib/postgresql'); the browser in $chromium (set CHROMIUM_PATH)." >&2
      exit 1
    fi
  else
    echo "Crackpoint needs these Debian packages, and installing them needs root: $missing" >&2
    echo "Run this once, then run npm $mode again:" >&2
    echo "" >&2
    echo "  sudo sh -c '$install'" >&2
    echo "" >&2
    exit 1
  fi
fi

if ! command -v node >/dev/null 2>&1; then
  echo "Node.js 20.19 or newer is needed and 'node' is not on the PATH." >&2
  exit 1
fi

if [ ! -f package-lock.json ]; then
  echo "package-lock.json is missing in $repo; it pins every npm package and must be committed." >&2
  exit 1
fi

# npm records what it installed in node_modules/.package-lock.json; older than the lock file means stale.
if [ ! -f node_modules/.package-lock.json ] || [ node_modules/.package-lock.json -ot package-lock.json ]; then
  echo "Installing npm packages (npm ci)"
  npm ci --no-audit --no-fund
fi

if [ ! -x node_modules/.bin/tsx ]; then
  echo "node_modules/.bin/tsx is missing after npm ci; is tsx still in package.json's devDependencies?" >&2
  exit 1
fi

# One process, no wrapper: Ctrl-C and SIGTERM reach the script itself, which stops what it started.
exec node --import tsx "scripts/$mode.ts" "$@"
