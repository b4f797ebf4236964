#!/usr/bin/env bash
# compare-r.sh: time R's MASS::fitdistr (negative binomial) inside a boot() case bootstrap
# against `caseweave estimate --bootstrap B` on the same offspring counts.
#
#   bash cmd/compare-r.sh [LINELIST.csv] [AS_OF]
#
# Without arguments it simulates a line list (caseweave simulate, seed 1). caseweave reads
# the line list; the R side gets the very offspring counts caseweave estimated from (the
# uncensored cases), rebuilt from offspring.histogram of `caseweave estimate --json`.
# B is $B (default 1000). Needs Rscript with the MASS and boot packages; exits 0 with a
# note when they are missing, so it never fails a machine without R.
#
# What is timed: R: boot(counts, function(d, i) fitdistr(d[i], "negative binomial")$estimate,
# R = B), single-threaded as boot runs by default. caseweave: the whole `estimate` command
# (read, link, serial interval, offspring fits and the B-replicate case bootstrap, chain-size
# fit, outlook), on all cores; so the caseweave time is an upper bound on its bootstrap.
set -euo pipefail
B=${B:-1000}
here=$(cd "$(dirname "$0")/.." && pwd)
if ! command -v Rscript >/dev/null || ! Rscript -e 'library(MASS); library(boot)' >/dev/null 2>&1; then
	echo "compare-r: Rscript with MASS and boot is not installed; nothing compared"
	exit 0
fi
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cw="$work/caseweave"
(cd "$here" && go build -o "$cw" ./cmd/caseweave)

ll=${1:-}
asof=${2:-}
if [ -z "$ll" ]; then
	ll="$work/linelist.csv"
	"$cw" simulate --R 0.9 --k 0.5 --index-cases 500 --index-spread 60 --until 2026-06-30 \
		--seed 1 -o "$ll" 2>/dev/null
	asof=2026-07-01
fi
if [ -z "$asof" ]; then
	asof=$(awk -F, 'NR > 1 && $3 > m { m = $3 } END { print m }' "$ll")
fi

start=$(date +%s.%N)
"$cw" estimate --as-of "$asof" --bootstrap "$B" --interval bca --json "$work/summary.json" "$ll" >/dev/null
end=$(date +%s.%N)
cw_s=$(echo "$end - $start" | bc -l)

# offspring.histogram[x] = cases with x offspring: expand it into the count vector.
python3 - "$work/summary.json" "$work/counts.txt" <<'PY'
import json, sys
h = json.load(open(sys.argv[1]))["offspring"]["histogram"]
with open(sys.argv[2], "w") as f:
    for x, n in enumerate(h):
        f.write(f"{x}\n" * n)
PY

r_out=$(Rscript - "$work/counts.txt" "$B" <<'RS'
suppressPackageStartupMessages({ library(MASS); library(boot) })
args <- commandArgs(trailingOnly = TRUE)
z <- scan(args[1], quiet = TRUE)
B <- as.integer(args[2])
set.seed(1)
stat <- function(d, i) {
  f <- tryCatch(suppressWarnings(fitdistr(d[i], "negative binomial")$estimate),
                error = function(e) c(size = NA, mu = NA))
  c(f[["mu"]], f[["size"]])
}
t <- system.time(b <- boot(z, stat, R = B))[["elapsed"]]
# BCa needs B above the sample size for its jackknife here, so R's side shows percentile bounds.
ci <- tryCatch(boot.ci(b, type = "perc", index = 1)$percent[4:5], error = function(e) c(NA, NA))
cat(sprintf("%d %.3f %.4f %.4f %.4f %.4f\n", length(z), t, b$t0[1], b$t0[2], ci[1], ci[2]))
RS
)
read -r n r_s r_R r_k r_lo r_hi <<<"$r_out"
cw_R=$(python3 -c 'import json,sys; o=json.load(open(sys.argv[1]))["offspring"]; print("%.4f %.4f %s %s" % (o["R"]["estimate"], [m for m in o["models"] if m["name"]=="negative_binomial"][0]["k"], o["R"]["percentile"][0], o["R"]["percentile"][1]))' "$work/summary.json")
echo "offspring counts: $n cases (uncensored), B = $B"
echo "R  MASS::fitdistr in boot():       ${r_s} s   R=$r_R k=$r_k  percentile R [$r_lo, $r_hi]"
echo "caseweave estimate (whole command): $(printf %.3f "$cw_s") s   R k percentile R: $cw_R"
echo "ratio R / caseweave: $(echo "$r_s / $cw_s" | bc -l | xargs printf %.1f)"
