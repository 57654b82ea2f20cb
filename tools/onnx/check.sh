#!/usr/bin/env bash
# The ONNX round trip, checked by an independent runtime: exports a model for
# every hidden activation, head and precision (examples/onnx_cases.rs, fitted
# on the demo data), then, for each file, runs the ONNX checker (full check)
# and onnxruntime on the demo rows and on seeded random rows, and compares
# the runtime's outputs with stratanet's own predictions
# (tools/onnx/check_case.py says how and to what tolerance).
#
# Usage: bash tools/onnx/check.sh [--release]
# The checker's Python packages are pinned in tools/onnx/requirements.txt and
# installed once into a virtual environment at target/onnx-venv.
set -euo pipefail
cd "$(dirname "$0")/../.."
profile=()
[ "${1:-}" = "--release" ] && profile=(--release)
venv=target/onnx-venv
if [ ! -x "$venv/bin/python" ] || ! cmp -s tools/onnx/requirements.txt "$venv/requirements.txt"; then
    rm -rf "$venv"
    python3 -m venv "$venv"
    "$venv/bin/pip" install -q --disable-pip-version-check -r tools/onnx/requirements.txt
    cp tools/onnx/requirements.txt "$venv/requirements.txt"
fi
out=target/onnx-cases
rm -rf "$out"
cargo run -q "${profile[@]}" --example onnx_cases -- "$out"
passed=0
failed=0
while read -r name; do
    if "$venv/bin/python" tools/onnx/check_case.py --require-canonical \
        "$out/$name.onnx" "$out/$name.inputs.csv" "$out/$name.expected.csv"; then
        passed=$((passed + 1))
    else
        failed=$((failed + 1))
    fi
done < "$out/cases.txt"
echo "onnx round trip: $passed passed, $failed failed"
[ "$failed" -eq 0 ]
