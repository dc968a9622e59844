#!/bin/sh
# End-to-end checks of the surety program: exit codes, files written or left
# alone, and a solve whose plan `check` reads back. Usage: cli_test.sh SURETY SRCDIR
set -u
surety=$1
src=$2
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
passed=0
failed=0
expect() { # expect CODE DESCRIPTION -- COMMAND...
    want=$1; what=$2; shift 3
    "$@" >"$tmp/out" 2>"$tmp/err"
    got=$?
    if [ "$got" -eq "$want" ]; then
        passed=$((passed + 1))
    else
        failed=$((failed + 1))
        echo "FAIL: $what: exit $got, expected $want"; cat "$tmp/err"
    fi
}
has() { # has FILE TEXT DESCRIPTION
    if grep -qF -- "$2" "$1"; then passed=$((passed + 1)); else
        failed=$((failed + 1)); echo "FAIL: $3: '$2' not in $1"; cat "$1"; fi
}
lacks() { # lacks FILE TEXT DESCRIPTION
    if grep -qF -- "$2" "$1"; then
        failed=$((failed + 1)); echo "FAIL: $3: '$2' in $1"; cat "$1"; else
        passed=$((passed + 1)); fi
}

tut=$src/instances/tutorial.json
expect 0 "help" -- "$surety" --help
expect 1 "no command" -- "$surety"
expect 1 "unknown command" -- "$surety" frobnicate
expect 1 "unknown option" -- "$surety" solve "$tut" --frobnicate
expect 1 "bad -n" -- "$surety" solve "$tut" -n -5
expect 1 "risk outside (0,1)" -- "$surety" solve "$tut" --risk 1.5
expect 2 "missing model file" -- "$surety" solve "$tmp/none.json"
has "$tmp/err" "cannot open" "missing model file message"

# a bad model names file, line, column and field
sed 's/"allowed": \["bay-1"\]/"allowed": ["bay-3"]/' "$tut" >"$tmp/bad.json"
expect 2 "unknown resource" -- "$surety" solve "$tmp/bad.json"
has "$tmp/err" "bad.json:26:35: error: jobs[4].allowed[0]: unknown resource 'bay-3' (did you mean 'bay-1'?)" "error position"

# a failed run leaves an existing output file untouched
echo keep >"$tmp/keep.csv"
expect 2 "sample of a bad model" -- "$surety" sample "$tmp/bad.json" -o "$tmp/keep.csv"
has "$tmp/keep.csv" "keep" "output untouched"
expect 2 "unwritable plan path" -- "$surety" solve "$tut" -o "$tmp/no/such/dir/p.json"

# solve, then check the plan it wrote; the plan is re-read by check
expect 0 "solve the tutorial" -- "$surety" solve "$tut" --quiet -o "$tmp/plan.json"
has "$tmp/out" "status optimal" "tutorial proven optimal"
has "$tmp/out" "Caution:" "solve carries the caution"
expect 0 "check the plan" -- "$surety" check "$tut" "$tmp/plan.json" --samples 20000
has "$tmp/out" "Clopper-Pearson" "check states its interval"
has "$tmp/out" "Caution:" "check carries the caution"
expect 0 "check --json" -- "$surety" check "$tut" "$tmp/plan.json" --samples 2000 --json
has "$tmp/out" '"verdict"' "check JSON has a verdict"

# a plan naming an unknown job is an input error
printf '{"plan": {"nosuchjob": "bay-1"}}\n' >"$tmp/badplan.json"
expect 2 "plan with an unknown job" -- "$surety" check "$tut" "$tmp/badplan.json"

# a node limit stops the search with exit 4 and a verified plan
expect 4 "node limit" -- "$surety" solve "$src/instances/workshops-30.json" -n 100 --node-limit 2000 --quiet --json
has "$tmp/out" '"stop": "node_limit"' "node limit reported"

# the root LP bound: on after a given node count, off with 'never'
expect 4 "root LP after 1 node" -- "$surety" solve "$src/instances/workshops-30.json" -n 100 --lp-after 1 --node-limit 6000 --progress
has "$tmp/err" "LP bound: root" "root LP reported on the progress stream"
expect 0 "root LP never" -- "$surety" solve "$tut" --lp-after never --quiet
expect 1 "bad --lp-after" -- "$surety" solve "$tut" --lp-after 0
# the LP at the top of each dive: on when asked, off when told
expect 4 "node LPs always" -- "$surety" solve "$src/instances/workshops-30.json" -n 100 --lp-after 1 --node-lp always --node-limit 6000 --progress
if ! grep -Eq "LP bound: root .*, [1-9][0-9]* nodes bounded by it" "$tmp/err"; then
    failed=$((failed + 1)); echo "FAIL: no node bounded by the LP with --node-lp always"; cat "$tmp/err"
else passed=$((passed + 1)); fi
expect 4 "node LPs never" -- "$surety" solve "$src/instances/workshops-30.json" -n 100 --lp-after 1 --node-lp never --node-limit 6000 --progress
has "$tmp/err" ", 0 nodes bounded by it" "no node bounded by the LP with --node-lp never"
expect 1 "bad --node-lp" -- "$surety" solve "$tut" --node-lp sometimes
# dives of one node bring the pool, restored nodes and node LPs into a
# search that the first dive closes by default; the optimum stays
expect 0 "default dives" -- "$surety" solve "$tut" --lp-after 1 --node-lp always --json --progress
lacks "$tmp/err" "LP bound: root" "the first dive closes the tutorial before the LP"
grep '"objective"' "$tmp/out" >"$tmp/objd"
expect 0 "dives of one node" -- "$surety" solve "$tut" --dive-nodes 1 --lp-after 1 --node-lp always --json --progress
if ! grep -Eq "LP bound: root .*, [1-9][0-9]* nodes bounded by it" "$tmp/err"; then
    failed=$((failed + 1)); echo "FAIL: no node bounded by the LP with --dive-nodes 1"; cat "$tmp/err"
else passed=$((passed + 1)); fi
has "$tmp/out" "$(cat "$tmp/objd")" "same objective with dives of one node"
expect 0 "depth first only" -- "$surety" solve "$tut" --dive-nodes all --json --quiet
has "$tmp/out" "$(cat "$tmp/objd")" "same objective depth first only"
expect 1 "bad --dive-nodes" -- "$surety" solve "$tut" --dive-nodes 0
expect 1 "bad --dive-nodes word" -- "$surety" solve "$tut" --dive-nodes some
# by default the root LP runs only where the split does not: past 65 536
# nodes, without and with the split
expect 4 "root LP by default without the split" -- "$surety" solve "$src/instances/workshops-30.json" -n 100 --split-after never --node-limit 70000 --progress
has "$tmp/err" "LP bound: root" "root LP by default where the split does not run"
expect 4 "no root LP by default with the split" -- "$surety" solve "$src/instances/workshops-30.json" -n 100 --node-limit 70000 --progress
has "$tmp/err" "decomposition bound:" "the split ran"
lacks "$tmp/err" "LP bound: root" "no root LP by default where the split runs"
# the decomposition bound: rounds from node 1 on are said, with their value
expect 4 "decomposition after 1 node" -- "$surety" solve "$src/instances/workshops-30.json" -n 100 --split-after 1 --node-limit 6000 --progress
has "$tmp/err" "decomposition bound:" "decomposition bound reported on the progress stream"
expect 0 "decomposition never" -- "$surety" solve "$tut" --split-after never --quiet
expect 1 "bad --split-after" -- "$surety" solve "$tut" --split-after -3
# the split's prices: scenarios (default) or jobs only; the same optimum
expect 0 "split with scenario prices" -- "$surety" solve "$tut" --split-after 1 --json --quiet
grep '"objective"' "$tmp/out" >"$tmp/obj0"
expect 0 "split with job prices only" -- "$surety" solve "$tut" --split-after 1 --split-prices jobs --json --quiet
has "$tmp/out" "$(cat "$tmp/obj0")" "same objective with job prices only"
expect 1 "bad --split-prices" -- "$surety" solve "$tut" --split-prices none
# how the rounds move the prices: a bundle (default) or subgradient steps;
# the same optimum either way
expect 0 "split with subgradient steps" -- "$surety" solve "$tut" --split-after 1 --split-steps subgradient --json --quiet
has "$tmp/out" "$(cat "$tmp/obj0")" "same objective with subgradient steps"
expect 0 "split with bundle steps" -- "$surety" solve "$tut" --split-after 1 --split-steps bundle --json --quiet
has "$tmp/out" "$(cat "$tmp/obj0")" "same objective with bundle steps"
expect 1 "bad --split-steps" -- "$surety" solve "$tut" --split-steps newton
# the most price rounds: the log counts them (4 by then without the cap)
expect 4 "two price rounds" -- "$surety" solve "$src/instances/workshops-30.json" -n 100 --split-after 1 --split-rounds 2 --node-limit 20000 --progress
has "$tmp/err" ", 2 price rounds," "--split-rounds caps the rounds"
has "$tmp/err" "decomposition probes:" "the probes follow the capped rounds"
expect 1 "bad --split-rounds" -- "$surety" solve "$tut" --split-rounds 0
# after the probes, nodes taken up again solve the split with all their
# placements, unless --split-root-only; the same optimum either way
d20=$src/instances/bench/diff-n20-m3-N100-e050-t05-s1.json
expect 0 "split at restored nodes" -- "$surety" solve "$d20" --split-after 1 --split-rounds 5 --json --progress
has "$tmp/err" "decomposition at restored nodes:" "restored nodes solve the split by default"
has "$tmp/err" "decomposition parts bounded at the nodes:" "and the nodes bound each resource's part"
grep '"objective"' "$tmp/out" >"$tmp/obj1"
expect 0 "split at the root only" -- "$surety" solve "$d20" --split-after 1 --split-rounds 5 --split-root-only --json --progress
if grep -qF "decomposition at restored nodes:" "$tmp/err"; then
    failed=$((failed + 1)); echo "FAIL: --split-root-only still split restored nodes"
else passed=$((passed + 1)); fi
has "$tmp/out" "$(cat "$tmp/obj1")" "same objective with the split at the root only"
# parts of the best plan searched again: from a given node count on, said
# on the progress stream, off with 'never'; the same optimum either way
expect 0 "parts after 1 node" -- "$surety" solve "$d20" --improve-after 1 --json --progress
has "$tmp/err" "parts of the best plan searched again:" "the parts are reported on the progress stream"
has "$tmp/out" "$(cat "$tmp/obj1")" "same objective with parts from node 1 on"
expect 0 "parts never" -- "$surety" solve "$d20" --improve-after never --json --progress
if grep -qF "parts of the best plan searched again:" "$tmp/err"; then
    failed=$((failed + 1)); echo "FAIL: --improve-after never still searched parts"
else passed=$((passed + 1)); fi
has "$tmp/out" "$(cat "$tmp/obj1")" "same objective without the parts"
expect 1 "bad --improve-after" -- "$surety" solve "$tut" --improve-after 0
expect 0 "gap tolerance" -- "$surety" solve "$src/instances/workshops-30.json" -n 100 --gap 0.3 --quiet
has "$tmp/out" "optimal within the --gap asked for" "a tolerated gap is spelled out next to the status"
# threads run the split's one-resource solves side by side; the tree
# search stays on one, which is said; the same optimum as on one thread
expect 0 "two threads asked for" -- "$surety" solve "$tut" --threads 2 --progress
has "$tmp/err" "the tree search runs on one" "what --threads runs on is said"
expect 0 "split on one thread" -- "$surety" solve "$d20" -n 40 --split-after 1 --split-rounds 3 --json --progress
grep '"objective"' "$tmp/out" >"$tmp/obj1"
expect 0 "split on two threads" -- "$surety" solve "$d20" -n 40 --split-after 1 --split-rounds 3 --threads 2 --json --progress
has "$tmp/err" "decomposition at restored nodes:" "two threads reach the restored nodes' solves"
has "$tmp/out" "$(cat "$tmp/obj1")" "same objective on two threads"
# the commands that solve several times take --threads too: the same levels
expect 0 "frontier on one thread" -- "$surety" frontier "$tut" --risks 0.05,0.1 --json
sed 's/"solve_seconds": [0-9.e+-]*//' "$tmp/out" >"$tmp/fr1"
expect 0 "frontier on two threads" -- "$surety" frontier "$tut" --risks 0.05,0.1 --threads 2 --json
sed 's/"solve_seconds": [0-9.e+-]*//' "$tmp/out" >"$tmp/fr2"
if cmp -s "$tmp/fr1" "$tmp/fr2" && grep -q '"allowance": 50' "$tmp/fr2"; then
    passed=$((passed + 1))
else failed=$((failed + 1)); echo "FAIL: frontier differs on two threads"; fi
expect 1 "bad --threads for frontier" -- "$surety" frontier "$tut" --risks 0.1 --threads 0
expect 1 "bad --threads for assure" -- "$surety" assure "$tut" --threads x
expect 1 "bad --threads for bounds" -- "$surety" bounds "$tut" --threads 2000
# scenarios every feasible plan fits are set aside, and said; the answer is
# the same when they are kept
expect 0 "set aside dominated scenarios" -- "$surety" solve "$tut" --risk 0.01 --json --progress
has "$tmp/err" "distinct scenarios set aside" "set-aside scenarios are said on the progress stream"
has "$tmp/out" '"searched": 246,' "scenarios searched in the JSON result"
grep '"objective"' "$tmp/out" >"$tmp/obj1"
expect 0 "keep dominated scenarios" -- "$surety" solve "$tut" --risk 0.01 --json --keep-dominated
has "$tmp/out" '"searched": 500,' "--keep-dominated searches every scenario"
has "$tmp/out" "$(cat "$tmp/obj1")" "same objective with and without the scenarios set aside"

# sample then export
expect 0 "sample" -- "$surety" sample "$tut" -n 50 -o "$tmp/s.csv"
expect 0 "export" -- "$surety" export "$tut" -n 50 --plain -o "$tmp/p.mps"
has "$tmp/p.mps" "ENDATA" "MPS complete"

echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
