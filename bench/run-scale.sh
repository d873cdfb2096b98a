#!/usr/bin/env bash
# Scale benchmark (docs/scale.md): makes three-run sets of about 1e5 ... 1e7 samples with `nffit simulate`
# (rotor θ̇ = μ − sin θ, μ = 1.02, 1.05, 1.1, 310 revolutions, noise 0.01: an invented demo scenario; denser
# sampling gives more samples) and prints, per set: samples, CSV size, `nffit analyze` wall and CPU seconds
# (best of REPEAT), MB/s of CSV end to end, the time merely to read the files (one core, CPU), and peak memory
# (max RSS from /usr/bin/time). Then fits the exponent of time against samples.
# Usage: bench/run-scale.sh [WORKDIR]   (env: REPEAT=2, THREADS=2, SIZES="0.2 0.063 0.02 0.0063 0.002")
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
work=${1:-${TMPDIR:-/tmp}/nffit-scale}
repeat=${REPEAT:-2}
threads=${THREADS:-2}
sizes=${SIZES:-"0.2 0.063 0.02 0.0063 0.002"}
mkdir -p "$work"
dotnet build "$root/src/NormalFormFit.Cli" -c Release -v q -nologo >/dev/null
dotnet build "$root/bench/NormalFormFit.Bench" -c Release -v q -nologo >/dev/null
nffit="$root/src/NormalFormFit.Cli/bin/Release/net10.0/nffit"
bench="$root/bench/NormalFormFit.Bench/bin/Release/net10.0/NormalFormFit.Bench"
[[ -x /usr/bin/time ]] || { echo "run-scale: needs GNU time (/usr/bin/time, Debian package 'time')" >&2; exit 2; }

echo "machine: $(nproc) cores; load before: $(cut -d' ' -f1-3 /proc/loadavg); threads=$threads, best of $repeat"
printf '%10s %8s %8s %8s %9s %10s %10s %9s\n' samples MB wall_s cpu_s MB/s_wall read_cpu_s read_MB/s peak_MiB
rows=()
for dt in $sizes; do
  set_dir="$work/dt-$dt"
  if [[ ! -f "$set_dir/manifest.csv" ]]; then
    "$nffit" simulate --params 1.02,1.05,1.1 --revolutions 310 --dt "$dt" --noise 0.01 --seed 1 --out "$set_dir" --quiet
  fi
  files=("$set_dir"/run-*.csv)
  samples=$(( $(cat "${files[@]}" | wc -l) - ${#files[@]} ))
  bytes=$(cat "${files[@]}" | wc -c)
  best_wall=1e9; best_cpu=1e9; peak=0
  for ((k = 0; k < repeat; k++)); do
    /usr/bin/time -f '%e %U %S %M' -o "$work/time.txt" "$nffit" analyze "$set_dir/manifest.csv" --threads "$threads" --json "$set_dir/report.json" --quiet
    read -r wall user sys rss < "$work/time.txt"
    cpu=$(awk -v u="$user" -v s="$sys" 'BEGIN { print u + s }')
    best_wall=$(awk -v a="$best_wall" -v b="$wall" 'BEGIN { print (b < a) ? b : a }')
    best_cpu=$(awk -v a="$best_cpu" -v b="$cpu" 'BEGIN { print (b < a) ? b : a }')
    peak=$(( rss > peak ? rss : peak ))
  done
  read_line=$("$bench" read "${files[@]}")
  read_cpu=$(sed -E 's/.*, ([0-9.]+) s CPU.*/\1/' <<<"$read_line")
  awk -v n="$samples" -v b="$bytes" -v w="$best_wall" -v c="$best_cpu" -v r="$read_cpu" -v p="$peak" \
    'BEGIN { printf "%10d %8.1f %8.2f %8.2f %9.0f %10.2f %10.0f %9.0f\n", n, b / 1e6, w, c, b / 1e6 / w, r, b / 1e6 / r, p / 1024 }'
  rows+=("$samples $best_wall $best_cpu")
done
printf '%s\n' "${rows[@]}" | awk '
  { x = log($1); n++; sx += x; sxx += x * x; yw = log($2); yc = log($3); sw += yw; sxw += x * yw; sc += yc; sxc += x * yc }
  END { if (n < 2) { print "fitted exponent: needs at least two sizes"; exit } d = n * sxx - sx * sx; printf "fitted exponent of time against samples: wall %.3f, CPU %.3f (least squares on logs, %d sizes)\n", (n * sxw - sx * sw) / d, (n * sxc - sx * sc) / d, n }'
echo "load after: $(cut -d' ' -f1-3 /proc/loadavg)"
