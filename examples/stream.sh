#!/usr/bin/env bash
# Stream invented notes through tidemark as a line-oriented mapper (run by hand, not in CI).
set -uo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
bin="${TIDEMARK:-$here/../target/release/tidemark}"
"$bin" extract --input jsonl --format jsonl < "$here/notes.jsonl"
status=$?
echo "tidemark exit code: $status (1 = some lines were answered with an error line)" >&2
exit "$status"
