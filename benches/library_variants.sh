#!/usr/bin/env bash
# Whole-command cost of the hand-written parts against the libraries that could replace them:
# builds `skybearing` from the committed tree once as it is and once per variant below (each a
# patch in benches/variants/, applied alone), then times `batch` of every build, interleaved,
# on the sessions of benches/batch_compare.sh (both kinds of headings), and checks that every
# build's tables are byte-identical to the unpatched build's.
#
#   csv-crate-scan        the batch scan on the csv crate's ByteRecord reader (csv-core inside),
#                         numbers by the archive's parse_f64
#   csv-crate-all-fields  the same, also doing the general reader's other work (UTC stamp check,
#                         the two further numbers): the archive reader rebuilt on the csv crate
#   general-reader        no fast scan: every file through archive::read::for_each_sample
#   std-trig              std's sin_cos (the platform's libm) instead of libm's sincos
#
# Every build reads samples.csv (`batch --csv-only`): that is the part the variants change.
# Two earlier variants, a memo of parsed numbers in the scan and trig.rs's own fdlibm kernels
# with a memo, were measured and dropped (figures in the README and at the top of
# circular/trig.rs); their patches no longer applied to the scan as it is and are gone.
#
# Usage: benches/library_variants.sh [ROUNDS [VARIANT...]]   (default 3 rounds, all variants)
#   BATCH_BENCH_DIR as for batch_compare.sh (run that first to make the sessions); BENCH_VENV.
set -euo pipefail
cd "$(dirname "$0")/.."
ROUNDS=${1:-3}
shift || true
WORK=${BATCH_BENCH_DIR:-target/batch-bench}
VARIANTS=("$@")
[ ${#VARIANTS[@]} -gt 0 ] || VARIANTS=(csv-crate-scan csv-crate-all-fields general-reader std-trig)
. benches/peers/common.sh
SRC=target/variants/src
OUT=target/variants/bin
mkdir -p "$OUT"
build() { # name [patch]
  rm -rf "$SRC" && mkdir -p "$SRC"
  git archive HEAD | tar -x -C "$SRC"
  [ -z "${2:-}" ] || patch -s -d "$SRC" -p1 < "$2"
  # (the patches leave code unused: its warnings go to a log)
  (cd "$SRC" && CARGO_TARGET_DIR=../build cargo build --release --quiet --bin skybearing) \
    2> "target/variants/build-$1.log" || { cat "target/variants/build-$1.log"; exit 1; }
  cp target/variants/build/release/skybearing "$OUT/$1"
}
echo "building base and ${#VARIANTS[@]} variants ..." >&2
build base
args=("base=$OUT/base")
for v in "${VARIANTS[@]}"; do
  build "$v" "benches/variants/$v.patch"
  args+=("$v=$OUT/$v")
done
for dir in "$WORK/sessions" "$WORK/sessions-float"; do
  echo
  echo "## $dir: $(ls "$dir" | wc -l) sessions, $(cat "$dir"/*/samples.csv | wc -c) bytes, $(nproc) cores, warm cache"
  cat "$dir"/*/samples.csv > /dev/null
  "$PY" benches/peers/time_binaries.py "$dir" "$WORK/variants-out" "$ROUNDS" "${args[@]}"
done
