#!/usr/bin/env bash
# Installs the built daemon, an example config and the systemd unit on this machine.
# Usage: deploy/install.sh   (after deploy/build.sh; run as root)
set -euo pipefail
cd "$(dirname "$0")/.."
[ -x build/tonewarden ] || { echo "install: build/tonewarden not found; run deploy/build.sh first" >&2; exit 2; }
id -u tonewarden >/dev/null 2>&1 || useradd --system --home /var/lib/tonewarden --shell /usr/sbin/nologin tonewarden
install -D -m 0755 build/tonewarden /usr/local/bin/tonewarden
install -d -m 0750 -o root -g tonewarden /etc/tonewarden
[ -f /etc/tonewarden/rig.toml ] || install -m 0640 -o root -g tonewarden config/example-rig.toml /etc/tonewarden/rig.toml
install -D -m 0644 README.md /usr/local/share/doc/tonewarden/README.md
install -D -m 0644 deploy/tonewarden.service /etc/systemd/system/tonewarden.service
echo "install: done. Edit /etc/tonewarden/rig.toml, then: systemctl daemon-reload && systemctl enable --now tonewarden"
