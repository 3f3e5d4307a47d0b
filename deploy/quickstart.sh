#!/usr/bin/env bash
# Sets up, builds and runs the demo: the invented Bay 4 pump-test rig of config/demo.toml,
# played by the built-in synthetic rig (no hardware needed). Stop it with Ctrl-C.
set -euo pipefail
cd "$(dirname "$0")/.."
deploy/setup.sh
deploy/build.sh
build_dir="${TONEWARDEN_BUILD_DIR:-build}"
data_dir="${TONEWARDEN_DEMO_DIR:-demo-data}"
mkdir -p "$data_dir"
listen=$(sed -n 's/^listen *= *"\([^"]*\)".*/\1/p' config/demo.toml | head -n1)
cat <<MSG

tonewarden demo: the synthetic Bay 4 pump rig (invented scenario)
  dashboard  http://${listen}/
  JSON API   http://${listen}/api/v1/status   (all routes: /api/v1/openapi.json)
  metrics    http://${listen}/metrics
  data       ${data_dir}/ (SQLite history, FFT wisdom, the API token for changes)
The story runs 60 times faster than the clock: the outer-race defect on the motor bearing starts
growing a second in, and its alarm fires about half a minute in. Caution: tonewarden is a monitoring aid, not a protection or
shutdown system. Press Ctrl-C to stop.

MSG
exec "$build_dir/tonewarden" run --config config/demo.toml --data-dir "$data_dir"
