#!/usr/bin/env bash
# Installs every Debian package tonewarden needs to build, test and run; idempotent.
# Runs `apt-get update` once per call, and `npm ci` for the dashboard when it has a lockfile.
set -euo pipefail
cd "$(dirname "$0")/.."

packages=(
  build-essential cmake pkg-config git curl
  libfftw3-dev libsndfile1-dev portaudio19-dev libasound2-dev alsa-utils
  libcpp-httplib-dev libsqlite3-dev sqlite3 libspdlog-dev nlohmann-json3-dev
  libtomlplusplus-dev libcli11-dev libsystemd-dev libmosquitto-dev
  mosquitto mosquitto-clients  # the notify tests start a private broker on a free loopback port
  libgtest-dev libgmock-dev libbenchmark-dev
  libcurl4-openssl-dev python3-numpy python3-scipy flac
  prometheus  # promtool lints /metrics in the http tests (installed without recommends)
  chromium  # headless, drives the dashboard browser test (tests/e2e/dashboard_browser_test.mjs)
)

missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done

if ((${#missing[@]})); then
  sudo=""
  [ "$(id -u)" -eq 0 ] || sudo="sudo"
  echo "setup: installing ${#missing[@]} Debian packages: ${missing[*]}"
  $sudo apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
else
  echo "setup: all Debian packages present"
fi

if [ -f web/package-lock.json ]; then
  if [ ! -d web/node_modules ] || [ web/package-lock.json -nt web/node_modules ]; then
    (cd web && npm ci --no-audit --no-fund)
  fi
fi
