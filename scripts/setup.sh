#!/usr/bin/env bash
# Installs pnpm (pinned) and the workspace's node modules, then builds the CLI (when stale). Safe to run again.
set -euo pipefail
cd "$(dirname "$0")/.."
if ! command -v pnpm >/dev/null 2>&1 || [ "$(pnpm --version 2>/dev/null)" != "12.4.2" ]; then
  npm install -g pnpm@12.4.2 >/dev/null
fi
if [ -n "${CI:-}" ]; then pnpm install --frozen-lockfile; else pnpm install; fi
node apps/cli/build.mjs
