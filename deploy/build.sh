#!/usr/bin/env bash
# Configures and builds tonewarden into ./build (Release with debug info).
set -euo pipefail
cd "$(dirname "$0")/.."
build_dir="${TONEWARDEN_BUILD_DIR:-build}"
cmake -S . -B "$build_dir" -DCMAKE_BUILD_TYPE=RelWithDebInfo >/dev/null
cmake --build "$build_dir" -j "$(nproc)"
