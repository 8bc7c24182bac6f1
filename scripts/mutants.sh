#!/usr/bin/env bash
# Mutation testing of the safety-relevant core with cargo-mutants, and the
# catch rate per file.
#
#   scripts/mutants.sh [--check] [--iterate] [FILE...]
#
# FILE is a source file under src/ (default: every file in SAFETY_FILES).
# Each file is run against the test targets that judge it (`tests_for`
# below; MUTANTS_TEST_ARGS overrides them), with `--jobs 1` under `nice`
# and a timeout per mutant (MUTANTS_TIMEOUT seconds, default 60). Results
# land in target/mutants/<first file of the group>/mutants.out.
#
# Per file it prints caught / missed / unviable / timeout, the missed
# mutants listed as equivalent in tests/mutants-equivalent.txt, and the
# catch rate over viable, non-equivalent mutants:
#   rate = (caught + timeout) / (caught + timeout + missed - equivalent)
# (a mutant whose tests hang has been noticed). With --check the script
# exits 1 if any missed mutant is not listed as equivalent. With --iterate
# only the mutants not caught (or unviable) in earlier runs into the same
# output directory are tested again (cargo-mutants --iterate), and the
# counts add up all of those runs: use it only after adding tests, with
# the mutated source unchanged since the first run.
#
# Needs `cargo install cargo-mutants --locked`.
set -euo pipefail
cd "$(dirname "$0")/.."

SAFETY_FILES=(
  src/steer/speed.rs
  src/steer/limits.rs
  src/steer/pure_pursuit.rs
  src/steer/stanley.rs
  src/steer/frenet.rs
  src/path/project.rs
  src/track/tracker.rs
  src/guide/supervisor.rs
  src/guide/guidance.rs
  src/track/foot.rs
)
EQUIVALENT=tests/mutants-equivalent.txt
OUT_ROOT=target/mutants

# The cargo test targets that judge FILE (unit tests always; integration
# targets by topic, to keep each mutant's build small). They are given to
# every cargo invocation (`--cargo-arg`), so each mutant builds only them.
GUIDANCE_TESTS="--test steering_supervisor --test steering_supervisor_edges --test steering_guidance_edges --test steering_closed_loop --test steering_laws --test steering_preview --test steering_reverse --test steering_uptime"
TRACKER_TESTS="--test core_tracker --test core_tracker_edges --test core_cusp --test core_drift --test core_projection --test core_props --test core_api --test core_bad_input --test build_passes"
tests_for() {
  case "$1" in
    src/steer/speed.rs | src/steer/limits.rs)
      echo "--lib --test steering_speed --test steering_limits" ;;
    src/steer/pure_pursuit.rs | src/steer/stanley.rs | src/steer/frenet.rs)
      echo "--lib --test steering_laws --test steering_closed_loop --test steering_reverse" ;;
    src/path/project.rs)
      echo "--lib --test core_projection --test core_props --test core_precision --test core_tracker" ;;
    src/guide/supervisor.rs | src/guide/guidance.rs)
      echo "--lib $GUIDANCE_TESTS" ;;
    src/track/tracker.rs)
      echo "--lib $TRACKER_TESTS $GUIDANCE_TESTS" ;;
    src/track/foot.rs)
      # The unit tests alone (one build of the crate per mutant, for time).
      echo "--lib" ;;
    *)
      echo "--lib --tests" ;;
  esac
}

check=0
iterate=()
files=()
for arg in "$@"; do
  case "$arg" in
    --check) check=1 ;;
    --iterate) iterate=(--iterate) ;;
    -h | --help) sed -n '2,20p' "$0"; exit 0 ;;
    *) files+=("$arg") ;;
  esac
done
[ ${#files[@]} -eq 0 ] && files=("${SAFETY_FILES[@]}")

if ! cargo mutants --version >/dev/null 2>&1; then
  echo "cargo-mutants is not installed: cargo install cargo-mutants --locked" >&2
  exit 2
fi

# Mutant names listed as equivalent (the text before "  # ").
equivalent_names() {
  [ -f "$EQUIVALENT" ] || return 0
  grep -v '^[[:space:]]*\(#\|$\)' "$EQUIVALENT" | sed 's/[[:space:]]*#.*$//'
}

# Files that share their test targets run in one cargo-mutants invocation
# (one baseline build); the counts are then split by file.
declare -A group_files=()
groups=()
for file in "${files[@]}"; do
  if [ ! -f "$file" ]; then
    echo "no such file: $file" >&2
    exit 2
  fi
  args="${MUTANTS_TEST_ARGS:-$(tests_for "$file")}"
  [ -z "${group_files[$args]+set}" ] && groups+=("$args")
  group_files[$args]="${group_files[$args]:-} $file"
done

status=0
summary=()
for args in "${groups[@]}"; do
  read -r -a test_args <<<"$args"
  read -r -a members <<<"${group_files[$args]}"
  out="$OUT_ROOT/$(echo "${members[0]}" | tr '/.' '__')"
  mkdir -p "$out"
  file_args=()
  for file in "${members[@]}"; do file_args+=(-f "$file"); done
  echo "== mutants: ${members[*]} (cargo test ${test_args[*]})"
  dir="$out/mutants.out"
  # Earlier runs' outcomes, kept for --iterate (cargo-mutants itself keeps
  # caught and unviable together in previously_caught.txt).
  for kind in caught unviable timeout; do
    touch "$out/all-$kind.txt"
    if [ ${#iterate[@]} -gt 0 ] && [ -f "$dir/$kind.txt" ]; then
      sort -u "$out/all-$kind.txt" "$dir/$kind.txt" -o "$out/all-$kind.txt"
    elif [ ${#iterate[@]} -eq 0 ]; then
      : >"$out/all-$kind.txt"
    fi
  done
  # cargo-mutants exits 2 when mutants are missed, 3 on timeouts: the
  # counts below decide, so only a failure to run at all (1, 4) stops here.
  rc=0
  cargo_args=()
  for a in "${test_args[@]}"; do cargo_args+=("--cargo-arg=$a"); done
  nice -n 15 cargo mutants --jobs 1 --timeout "${MUTANTS_TIMEOUT:-60}" \
    --no-shuffle --colors never "${iterate[@]}" "${file_args[@]}" -o "$out" "${cargo_args[@]}" || rc=$?
  if [ "$rc" -ne 0 ] && [ "$rc" -ne 2 ] && [ "$rc" -ne 3 ]; then
    echo "cargo mutants failed on ${members[*]} (exit $rc)" >&2
    exit "$rc"
  fi
  for kind in caught unviable timeout; do
    sort -u "$out/all-$kind.txt" "$dir/$kind.txt" -o "$out/all-$kind.txt"
  done
  for file in "${members[@]}"; do
    # This file's lines of list $1 (one mutant per line): caught, unviable
    # and timeout over all runs kept, missed from this run.
    of() {
      local list="$dir/$1"
      [ "$1" != missed.txt ] && list="$out/all-$1"
      [ -f "$list" ] && grep -F "$file:" "$list" || true
    }
    count() { of "$1" | grep -c . || true; }
    caught=$(count caught.txt)
    missed=$(count missed.txt)
    unviable=$(count unviable.txt)
    timeout=$(count timeout.txt)
    equiv=$(of missed.txt | grep -Fxc -f <(equivalent_names; echo '#none#') || true)
    open=$(of missed.txt | grep -Fvx -f <(equivalent_names; echo '#none#') || true)
    stale=$(equivalent_names | grep -F "$file:" | grep -Fvx -f <(of missed.txt; echo '#none#') || true)
    detected=$((caught + timeout))
    judged=$((detected + missed - equiv))
    rate=$(awk -v d="$detected" -v j="$judged" 'BEGIN { if (j > 0) printf "%.1f %%", 100 * d / j; else print "n/a" }')
    summary+=("$(printf '%-26s caught %4d  missed %4d  unviable %4d  timeout %4d  equivalent %3d  rate %s' \
      "$file" "$caught" "$missed" "$unviable" "$timeout" "$equiv" "$rate")")
    if [ -n "$open" ]; then
      echo "$file: missed, not listed as equivalent:"
      echo "$open" | sed 's/^/  /'
      [ "$check" -eq 1 ] && status=1
    fi
    if [ -n "$stale" ]; then
      echo "$file: listed in $EQUIVALENT but not missed (remove or fix the line):"
      echo "$stale" | sed 's/^/  /'
      [ "$check" -eq 1 ] && status=1
    fi
  done
done

echo "== catch rate per file (viable, non-equivalent mutants; timeouts count as caught)"
printf '%s\n' "${summary[@]}"
exit "$status"
