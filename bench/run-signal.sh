#!/usr/bin/env bash
# One-signal benchmark (issue 13): 60 s current-clamp sweeps at 20 kHz (1.2e6 samples each, `time_ms,Vm_mV`) of the
# class-I Morris–Lecar model, made by `NormalFormFit.Bench sweeps` (invented noise levels). Prints `nffit analyze`
# wall and CPU seconds (best of REPEAT, one thread) for one sweep alone (that set cannot answer: one run, exit 3, but
# it is read and its events detected in full) and for three sweeps, and the time per sweep.
# The machine is shared: run under `nice` and read the CPU figure; wall time includes waiting for a core.
# Usage: bench/run-signal.sh [WORKDIR]   (env: REPEAT=3, SECONDS_PER_SWEEP=60, PROTOPHASE=1 adds --signal-protophase)
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
work=${1:-${TMPDIR:-/tmp}/nffit-signal}
repeat=${REPEAT:-3}
seconds=${SECONDS_PER_SWEEP:-60}
dotnet build "$root/src/NormalFormFit.Cli" -c Release -v q -nologo >/dev/null
dotnet build "$root/bench/NormalFormFit.Bench" -c Release -v q -nologo >/dev/null
nffit="$root/src/NormalFormFit.Cli/bin/Release/net10.0/nffit"
bench="$root/bench/NormalFormFit.Bench/bin/Release/net10.0/NormalFormFit.Bench"
[[ -x /usr/bin/time ]] || { echo "run-signal: needs GNU time (/usr/bin/time, Debian package 'time')" >&2; exit 2; }
[[ -f "$work/manifest.csv" ]] || "$bench" sweeps "$work" "$seconds"
echo "machine: $(nproc) cores; load before: $(cut -d' ' -f1-3 /proc/loadavg); best of $repeat, --threads 1${PROTOPHASE:+ --signal-protophase}"
printf '%-10s %6s %10s %8s %8s %12s\n' set sweeps samples wall_s cpu_s cpu_s/sweep
for set in one manifest; do
  n=$(( $(wc -l < "$work/$set.csv") - 1 ))
  samples=$(( $(cat $(awk -F, 'NR > 1 { print "'"$work"'/" $1 }' "$work/$set.csv") | wc -l) - n ))
  best_wall=1e9; best_cpu=1e9
  for ((k = 0; k < repeat; k++)); do
    /usr/bin/time -f '%e %U %S' -o "$work/time.txt" "$nffit" analyze "$work/$set.csv" --threads 1 ${PROTOPHASE:+--signal-protophase} --json "$work/$set.json" --quiet 2>"$work/$set.err" || true
    read -r wall user sys < <(tail -n 1 "$work/time.txt")
    cpu=$(awk -v u="$user" -v s="$sys" 'BEGIN { print u + s }')
    best_wall=$(awk -v a="$best_wall" -v b="$wall" 'BEGIN { print (b < a) ? b : a }')
    best_cpu=$(awk -v a="$best_cpu" -v b="$cpu" 'BEGIN { print (b < a) ? b : a }')
  done
  awk -v s="$set" -v n="$n" -v m="$samples" -v w="$best_wall" -v c="$best_cpu" 'BEGIN { printf "%-10s %6d %10d %8.2f %8.2f %12.2f\n", s, n, m, w, c, c / n }'
done
echo "load after: $(cut -d' ' -f1-3 /proc/loadavg)"
