#!/usr/bin/env python3
"""Check one file written by `stratanet export-onnx` with the ONNX checker and onnxruntime.

Usage:
    check_case.py MODEL.onnx INPUTS.csv EXPECTED.csv [--rtol R] [--floor A]
                  [--require-canonical]

The graph's input and numeric outputs are `double` whatever the network's
precision (the `precision` metadata entry says which arithmetic the network
itself uses, and sets the default tolerance).

INPUTS.csv: a header of feature names (it must equal the model's
`feature_names` metadata), then one row of numbers per input row (`NaN` or an
empty cell for a missing value).

EXPECTED.csv: for a classifier, a header `probability:<label>` for each class
in the model's order followed by `label`, then per row the expected
probabilities and label; otherwise a header `values:0`, `values:1`, ... and
the expected values.

What is checked, in order (any failure exits 1; a usage or file problem
exits 2):
  1. `onnx.checker.check_model(model, full_check=True)` (structure, operator
     schemas, shape inference in strict mode).
  2. The graph's outputs and element types match the contract.
  3. onnxruntime (CPU provider) runs the rows twice, with its default graph
     optimisations and with none (the graph as written); every number of
     both runs is compared with
     the relative difference  |a - b| / max(|b|, floor)  (a = runtime,
     b = expected); it must not exceed rtol. Below `floor` in magnitude the
     test is therefore absolute: |a - b| <= rtol * floor. NaN matches only
     NaN, an infinity only the same infinity.
  4. Labels must be equal, except where the expected probabilities of the
     expected class and of the runtime's class differ, but by no more than
     the tolerance above (a near-tie that rounding may break either way).
     An exact tie in the expected probabilities is not excused: the tie rule
     is part of the contract.

Tolerances. rtol defaults to 1e-6 for an f64 network and 1e-5 for an f32
network (the acceptance bounds of the export); the figures printed show how
far below them the runtime actually is. The floor is `--floor` (default 1e-6 for f64, 1e-1 for f32)
times the column's scale:
  - a probability column has scale 1: probabilities are computed to an
    absolute accuracy of a few units in the last place of 1 (2.2e-16 in
    double, 1.2e-7 in float), so 1 - p for p near 1 is no more accurate
    than that in absolute terms;
  - a column of values has the scale of its largest finite expected
    magnitude, or of its output offset (the exporter's `output.offset`
    initialiser) if that is larger: a de-standardised value is
    z * scale + offset, and a sum is only accurate relative to the size of
    its terms (Higham, "Accuracy and Stability of Numerical Algorithms",
    2nd ed., 2002, chapter 4 on summation; recalled from memory), so a value
    that nearly cancels carries the absolute error of the larger terms.
So the smallest difference that can fail is 1e-12 (double) or 1e-6 (float)
times the column's scale: about 17 units in the last place of 1 in float,
which covers a few roundings in the hidden layers amplified by the moderate
cancellation of rows far outside the fitted range; double keeps a margin
of thousands of units.

--require-canonical also fails unless decoding the file with the protobuf
library and encoding it again reproduces the same bytes (the exporter writes
fields in field-number order, as protobuf serialisers do).
"""

import argparse
import csv
import json
import math
import sys

import numpy as np
import onnx
import onnxruntime as ort
from onnx import numpy_helper

DEFAULTS = {
    # network precision: (rtol, floor)
    "f64": (1e-6, 1e-6),
    "f32": (1e-5, 1e-1),
}


def fail_usage(message):
    print(f"check_case: {message}", file=sys.stderr)
    sys.exit(2)


def read_csv(path):
    try:
        with open(path, newline="", encoding="utf-8") as f:
            rows = list(csv.reader(f))
    except OSError as e:
        fail_usage(f"{path}: {e.strerror}")
    if not rows:
        fail_usage(f"{path}: the file is empty; it needs a header line")
    return rows[0], rows[1:]


def parse_number(path, line, column, text):
    if text.strip() == "":
        return math.nan
    try:
        return float(text)
    except ValueError:
        fail_usage(f"{path}, line {line}, column {column}: {text!r} is not a number")


def rel_diff(a, b, floor):
    """|a - b| / max(|b|, floor), with NaN/infinity handled exactly."""
    if math.isnan(b) or math.isnan(a):
        return 0.0 if (math.isnan(a) and math.isnan(b)) else math.inf
    if math.isinf(b) or math.isinf(a):
        return 0.0 if a == b else math.inf
    return abs(a - b) / max(abs(b), floor)


def read_expected(path, classifier, labels, n_rows):
    """The expected numbers (rows x columns) and, for a classifier, labels."""
    header, rows = read_csv(path)
    if len(rows) != n_rows:
        fail_usage(f"{path}: {len(rows)} rows, but the inputs have {n_rows}")
    if classifier:
        want = [f"probability:{c}" for c in labels] + ["label"]
        if header != want:
            fail_usage(f"{path}: the header {header} does not match the model's classes {want}")
        numbers = [r[:-1] for r in rows]
        expected_labels = [r[-1] for r in rows]
    else:
        numbers, expected_labels = rows, None
    width = len(header) - (1 if classifier else 0)
    for i, r in enumerate(numbers):
        if len(r) != width:
            fail_usage(f"{path}, line {i + 2}: {len(r)} numbers, expected {width}")
    values = np.array(
        [[parse_number(path, i + 2, j + 1, t) for j, t in enumerate(r)] for i, r in enumerate(numbers)],
        dtype=np.float64,
    ).reshape(n_rows, width)
    return values, expected_labels


def compare(result, expected, expected_labels, labels, scales, np_type, rtol, floor):
    """Problems found and (largest relative, largest absolute difference, excused near-ties)."""
    problems = []
    classifier = expected_labels is not None
    numeric = result.get("probabilities" if classifier else "values")
    if numeric is None:
        return [f"no {'probabilities' if classifier else 'values'} output"], (math.inf, math.inf, 0)
    if numeric.dtype != np_type:
        problems.append(f"numeric output has element type {numeric.dtype}, expected {np.dtype(np_type)}")
    if numeric.shape != expected.shape:
        problems.append(f"numeric output has shape {numeric.shape}, expected {expected.shape}")
        return problems, (math.inf, math.inf, 0)
    worst_rel, worst_abs, worst_at, mismatches = 0.0, 0.0, None, 0
    for i in range(expected.shape[0]):
        for j in range(expected.shape[1]):
            a, b = float(numeric[i, j]), float(expected[i, j])
            r = rel_diff(a, b, floor * scales[j])
            if math.isfinite(a) and math.isfinite(b):
                worst_abs = max(worst_abs, abs(a - b))
            if r > worst_rel:
                worst_rel, worst_at = r, (i, j, a, b)
            if r > rtol:
                mismatches += 1
    if mismatches:
        i, j, a, b = worst_at
        problems.append(
            f"{mismatches} numbers differ by more than rtol {rtol:g} (floor {floor:g} x column scale); "
            f"worst at row {i + 1}, column {j + 1}: runtime {a!r}, expected {b!r}"
        )
    near_ties = 0
    if classifier:
        got = result.get("label")
        if got is None or got.shape != (expected.shape[0],):
            problems.append(f"label output missing or of shape {None if got is None else got.shape}")
            return problems, (worst_rel, worst_abs, 0)
        index = {c: k for k, c in enumerate(labels)}
        for i, (want, have) in enumerate(zip(expected_labels, (str(v) for v in got.tolist()))):
            if want == have:
                continue
            if want in index and have in index:
                pw, ph = expected[i, index[want]], expected[i, index[have]]
                if pw != ph and rel_diff(ph, pw, floor) <= rtol:
                    near_ties += 1
                    continue
            problems.append(f"row {i + 1}: label {have!r}, expected {want!r}")
    return problems, (worst_rel, worst_abs, near_ties)


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("model")
    ap.add_argument("inputs")
    ap.add_argument("expected")
    ap.add_argument("--rtol", type=float, help="relative tolerance (default by precision)")
    ap.add_argument("--floor", type=float, help="magnitude below which the test is absolute")
    ap.add_argument("--require-canonical", action="store_true")
    args = ap.parse_args()

    try:
        with open(args.model, "rb") as f:
            data = f.read()
    except OSError as e:
        fail_usage(f"{args.model}: {e.strerror}")
    try:
        model = onnx.load_from_string(data)
    except Exception as e:  # the protobuf library's own error
        print(f"FAIL {args.model}: not a valid ONNX protobuf: {e}")
        return 1

    problems = []
    try:
        onnx.checker.check_model(model, full_check=True)
    except Exception as e:
        problems.append(f"onnx.checker: {e}")
    canonical = model.SerializeToString() == data
    if args.require_canonical and not canonical:
        problems.append("re-encoding by the protobuf library gives different bytes")

    opsets = ", ".join(f"{o.domain or 'ai.onnx'}={o.version}" for o in model.opset_import)
    meta = {p.key: p.value for p in model.metadata_props}
    inputs = [i for i in model.graph.input]
    outputs = [o.name for o in model.graph.output]
    if len(inputs) != 1 or inputs[0].name != "features":
        problems.append(f"graph inputs are {[i.name for i in inputs]}, expected ['features']")
    elem_code = inputs[0].type.tensor_type.elem_type if inputs else 0
    if elem_code != onnx.TensorProto.DOUBLE:
        problems.append(f"input element type {elem_code} is not double")
    elem = meta.get("precision")
    if elem not in DEFAULTS:
        problems.append(f"precision metadata {elem!r} is neither f32 nor f64")
        elem = "f64"
    rtol = args.rtol if args.rtol is not None else DEFAULTS[elem][0]
    floor = args.floor if args.floor is not None else DEFAULTS[elem][1]
    np_type = np.float64
    classifier = "label" in outputs
    want_outputs = ["probabilities", "label"] if classifier else ["values"]
    if outputs != want_outputs:
        problems.append(f"outputs are {outputs}, expected {want_outputs}")
    labels = json.loads(meta.get("class_labels", "[]"))

    header, rows = read_csv(args.inputs)
    names = json.loads(meta.get("feature_names", "null"))
    if names is not None and header != names:
        fail_usage(f"{args.inputs}: the header {header} is not the model's feature names {names}")
    for i, r in enumerate(rows):
        if len(r) != len(header):
            fail_usage(f"{args.inputs}, line {i + 2}: {len(r)} cells, expected {len(header)}")
    x = np.array(
        [[parse_number(args.inputs, i + 2, j + 1, t) for j, t in enumerate(r)] for i, r in enumerate(rows)],
        dtype=np.float64,
    ).reshape(len(rows), len(header))
    expected, expected_labels = read_expected(args.expected, classifier, labels, len(rows))

    # Probabilities live on [0, 1]: their scale is 1. A column of values has
    # the scale of its largest finite expected magnitude, or of its output
    # offset if that is larger (see the module documentation).
    offset = next(
        (numpy_helper.to_array(t) for t in model.graph.initializer if t.name == "output.offset"), None
    )
    scales = []
    for j in range(expected.shape[1]):
        finite = [abs(v) for v in expected[:, j] if math.isfinite(v)]
        if offset is not None and offset.shape == (expected.shape[1],):
            finite.append(abs(float(offset[j])))
        scales.append(1.0 if classifier else max(finite, default=1.0) or 1.0)

    # Twice: with the runtime's default graph optimisations (which may fuse
    # nodes) and with none (the graph exactly as written).
    worst_rel, worst_abs, near_ties = 0.0, 0.0, 0
    for level, tag in [
        (ort.GraphOptimizationLevel.ORT_ENABLE_ALL, "optimised"),
        (ort.GraphOptimizationLevel.ORT_DISABLE_ALL, "unoptimised"),
    ]:
        options = ort.SessionOptions()
        options.graph_optimization_level = level
        try:
            session = ort.InferenceSession(data, options, providers=["CPUExecutionProvider"])
            names_out = [o.name for o in session.get_outputs()]
            result = dict(zip(names_out, session.run(None, {session.get_inputs()[0].name: x.astype(np_type)})))
        except Exception as e:
            problems.append(f"onnxruntime ({tag}): {e}")
            continue
        found, (r, a, t) = compare(result, expected, expected_labels, labels, scales, np_type, rtol, floor)
        problems.extend(f"{tag}: {p}" for p in found)
        worst_rel, worst_abs, near_ties = max(worst_rel, r), max(worst_abs, a), max(near_ties, t)

    status = "FAIL" if problems else "ok"
    print(
        f"{status} {args.model}: opset {opsets}, ir_version {model.ir_version}, {elem}, "
        f"{len(rows)} rows, max rel diff {worst_rel:.3e}, max abs diff {worst_abs:.3e} "
        f"(rtol {rtol:g}, floor {floor:g})"
        + (f", {near_ties} near-tie labels excused" if near_ties else "")
        + ("" if canonical else ", protobuf re-encoding differs")
    )
    for p in problems:
        print(f"  - {p}")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
