#!/usr/bin/env bash
# The SIGKILL reliability test at full size: 1000 kills of a writer process, each followed by
# an integrity check and a look-up of every contact the writer acknowledged. Prints the figures.
set -euo pipefail
cd "$(dirname "$0")/.."
NEARSKY_KILLS="${1:-1000}" cargo test --release --locked --test store_reliability \
  every_acknowledged_contact_survives_sigkill -- --nocapture 2>&1 | grep -E "kill test|test result"
