#!/usr/bin/env bash
# Runs the libFuzzer targets of tests/fuzz (DEVELOPERS.md, "Fuzzing").
#   bash tools/fuzz.sh BUILD_DIR SECONDS [TARGET...]
# BUILD_DIR is a folder configured with clang and -DCULLCAST_FUZZ=ON whose
# `fuzz_targets` are built. Each target runs SECONDS seconds from the committed
# seeds (tests/fuzz/corpus/<target>); new inputs go to a scratch corpus, never
# into the repository. Exit status 1 when any target found a crash, a hang, a
# sanitizer report or an exception other than the documented error type; the
# reproducer is left in BUILD_DIR/fuzz-findings/<target>/.
set -uo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
build="${1:?usage: tools/fuzz.sh BUILD_DIR SECONDS [TARGET...]}"
seconds="${2:?usage: tools/fuzz.sh BUILD_DIR SECONDS [TARGET...]}"
shift 2
targets=("$@")
if ((${#targets[@]} == 0)); then targets=(scenario csv_table surveys aggregations cf_time); fi

failed=()
for t in "${targets[@]}"; do
  exe="$build/tests/fuzz/fuzz_$t"
  if [[ ! -x "$exe" ]]; then echo "fuzz: $exe not built (ninja -C $build fuzz_targets)" >&2; exit 2; fi
  scratch="$(mktemp -d)"
  findings="$build/fuzz-findings/$t"
  mkdir -p "$findings"
  extra=()
  if [[ -f "$root/tests/fuzz/$t.dict" ]]; then extra+=("-dict=$root/tests/fuzz/$t.dict"); fi
  # -timeout: one input taking longer than this is a hang; -rss_limit_mb: a leak or blow-up.
  if "$exe" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 -max_len=4096 \
      -print_final_stats=1 -artifact_prefix="$findings/" "${extra[@]}" \
      "$scratch" "$root/tests/fuzz/corpus/$t" >"$findings/log.txt" 2>&1; then
    runs="$(grep -m1 'stat::number_of_executed_units' "$findings/log.txt" | awk '{print $2}')"
    echo "fuzz: $t clean ($runs inputs in ${seconds}s)"
  else
    echo "fuzz: $t FOUND A PROBLEM; log and reproducer in $findings:" >&2
    grep -E 'ERROR|runtime error|SUMMARY|what\(\)|Test unit written' "$findings/log.txt" | head -n 12 >&2
    failed+=("$t")
  fi
  rm -rf "$scratch"
done
if ((${#failed[@]})); then
  echo "fuzz: findings in: ${failed[*]} (reproduce: $build/tests/fuzz/fuzz_<target> <file>)" >&2
  exit 1
fi
