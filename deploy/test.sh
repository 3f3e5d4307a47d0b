#!/usr/bin/env bash
# Sets up, builds, then runs the default test suite through ctest.
# Long soaks carry the ctest label "soak" and are excluded; run them with:
#   ctest --test-dir build -L soak
set -euo pipefail
cd "$(dirname "$0")/.."
deploy/setup.sh
deploy/build.sh
build_dir="${TONEWARDEN_BUILD_DIR:-build}"
ctest --test-dir "$build_dir" --output-on-failure -j "$(nproc)" -LE soak --timeout 600
