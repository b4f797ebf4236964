#!/usr/bin/env bash
# A mutation pass over caseweave's statistical code: each line of mutations.txt (or of the
# file given as $1) is one small change, applied alone; the package's tests are run, the file
# is restored, and the mutation is reported killed (a test failed) or SURVIVED (all passed).
# Run from anywhere inside the repository:  bash testdata/mutation/run.sh
# It edits files in place and restores them (also on interrupt); run it on a clean tree.
set -euo pipefail
cd "$(dirname "$0")/../.."
list="${1:-testdata/mutation/mutations.txt}"
survivors=0 killed=0 n=0
current=""
restore() { if [ -n "$current" ]; then git checkout -q -- "$current"; current=""; fi; }
trap restore EXIT INT TERM
while IFS= read -r line; do
  case "$line" in ''|'#'*) continue ;; esac
  IFS='|' read -r file old new pkg <<<"$line"
  file=$(echo "$file" | xargs); pkg=$(echo "$pkg" | xargs)
  old="${old# }"; old="${old% }"; new="${new# }"; new="${new% }"
  n=$((n + 1))
  if ! git diff --quiet -- "$file"; then echo "$file has uncommitted changes; stopping" >&2; exit 2; fi
  count=$(grep -cF -- "$old" "$file" || true)
  if [ "$count" != 1 ]; then echo "#$n $file: the text occurs $count times, not once: $old" >&2; exit 2; fi
  current="$file"
  OLD="$old" NEW="$new" perl -0pi -e 's/\Q$ENV{OLD}\E/$ENV{NEW}/' "$file"
  if go test -count=1 -timeout 10m "$pkg" >/tmp/caseweave-mutation.log 2>&1; then
    echo "SURVIVED #$n $file: '$old' -> '$new' ($pkg)"
    survivors=$((survivors + 1))
  else
    echo "killed   #$n $file: '$old' -> '$new' ($(grep -m1 -E '^\s+--- FAIL|^--- FAIL|FAIL|build failed' /tmp/caseweave-mutation.log | xargs))"
    killed=$((killed + 1))
  fi
  restore
done <"$list"
echo "$n mutations: $killed killed, $survivors survived"
