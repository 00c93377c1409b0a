#!/usr/bin/env bash
# Gateway check (run by ci/test.sh): an independent Modbus TCP client
# (pymodbus from PyPI, pinned) reads the register image that
# `polytrope-host gateway` serves on 127.0.0.1 and checks it against the
# kernel's results; exceptions, commands, a stalled client, 100 clients
# (ci/gateway_check.py). Only loopback traffic; bounded in time.
set -euo pipefail
cd "$(dirname "$0")/../.."

PYMODBUS_VERSION=3.11.4
if ! python3 -c "import pymodbus, sys; sys.exit(pymodbus.__version__ != '$PYMODBUS_VERSION')" 2>/dev/null; then
  echo "gateway: installing pymodbus $PYMODBUS_VERSION"
  python3 -m pip install -q --disable-pip-version-check --root-user-action=ignore "pymodbus==$PYMODBUS_VERSION"
fi
cargo build -q --release -p polytrope-host
timeout 180 python3 ci/gateway_check.py "$PWD/target/release/polytrope-host"
