#!/usr/bin/env bash
# The whole test suite on a fresh Debian 12 machine: installs what the tests need, then runs pytest.
# Used verbatim by the README and by .ci/run.
set -euo pipefail
cd "$(dirname "$0")/.."

SUDO=""
if [ "$(id -u)" != "0" ]; then SUDO="sudo"; fi

# Real headless Chromium for the browser tests (Debian's packages, never a downloaded browser).
if [ ! -x /usr/lib/chromium/chromium ] || ! command -v chromedriver >/dev/null 2>&1; then
  $SUDO apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq chromium chromium-driver >/dev/null
fi

python3 -m pip install -q --disable-pip-version-check -r requirements-test.txt

# Keep Chromium's profile and caches out of the home folder.
SCRATCH="$(mktemp -d)"
export XDG_CONFIG_HOME="$SCRATCH/config" XDG_CACHE_HOME="$SCRATCH/cache"
mkdir -p "$XDG_CONFIG_HOME" "$XDG_CACHE_HOME"

python3 -m pytest "$@"
