#!/usr/bin/env bash
# Debian's Chromium for the browser tests (test/browser-*.test.ts, driven by playwright-core;
# `npx playwright install` cannot download browsers here). Idempotent and quick when the
# browser is already installed: apt runs only when /usr/bin/chromium is missing.
set -euo pipefail
if [ -x /usr/bin/chromium ]; then
  exit 0
fi
export DEBIAN_FRONTEND=noninteractive
SUDO=""
if [ "$(id -u)" -ne 0 ]; then SUDO="sudo"; fi
$SUDO apt-get update -q
$SUDO apt-get install -y -q --no-install-recommends chromium fonts-dejavu-core
