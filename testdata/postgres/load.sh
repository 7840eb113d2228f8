#!/usr/bin/env bash
# Loads the demo cohorts into the database named by the standard PG*
# environment variables: writes the invented demo with 'riskaudit demo'
# into a temporary folder and runs load.sql there.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
(cd "$root" && go run ./cmd/riskaudit demo --out "$work/demo" >/dev/null)
cd "$work/demo"
psql -X -q -v ON_ERROR_STOP=1 -f "$here/load.sql"
