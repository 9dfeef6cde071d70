#!/usr/bin/env bash
# The README's test command: install everything the tests need, then run them all.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/install-test-tools.sh
bash scripts/setup.sh
pnpm test
