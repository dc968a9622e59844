#!/bin/sh
# The split's one-resource solves on two threads (src/solve/decomp.c,
# run_subs), watched by Valgrind's race detector (helgrind): any data race
# fails the test, and so does a run that no longer reaches the rounds, the
# probes and the restored nodes' solves, which is what it must watch.
# Usage: threads_race.sh SURETY SRCDIR
set -u
surety=$1
src=$2
if ! command -v valgrind >/dev/null 2>&1; then
    echo "valgrind is missing (Debian package valgrind; the README set-up command installs it)"
    exit 1
fi
log=$(mktemp)
trap 'rm -f "$log"' EXIT
valgrind --tool=helgrind --error-exitcode=9 "$surety" solve \
    "$src/instances/bench/diff-n20-m3-N100-e050-t05-s1.json" -n 40 \
    --split-after 1 --split-rounds 3 --threads 2 --progress >/dev/null 2>"$log"
rc=$?
fail=0
if [ "$rc" -ne 0 ]; then
    echo "FAIL: exit $rc under helgrind (9: a data race)"; fail=1
fi
for what in "threads: the decomposition's one-resource solves run on up to 2" \
            "price rounds" "decomposition probes:" "decomposition at restored nodes:"; do
    if ! grep -qF -- "$what" "$log"; then
        echo "FAIL: the run did not reach '$what'"; fail=1
    fi
done
[ "$fail" -eq 0 ] || { grep -E "Possible data race|ERROR SUMMARY" "$log" | head -20; exit 1; }
grep "ERROR SUMMARY" "$log"
