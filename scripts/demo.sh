#!/usr/bin/env bash
# The README's main-job command: simulate the bundled sample site, process it, serve the viewer.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh >/dev/null
pnpm lamina simulate sample-sites/yard/scenario.json --out sample-sites/yard/site
pnpm lamina process sample-sites/yard/site --out out/yard
pnpm lamina view out/yard "$@"
