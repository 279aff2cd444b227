# Campaign: starts the workstation runner on a remote workstation. Standard input begins with the runner's own
# text up to a line "__runner_end__"; it is kept as ROOT/runner.sh (replaced when it changed), then run with the
# rest of standard input. Arguments: ROOT CORES GRACE COMMAND [ARGUMENTS].
root=$1
mkdir -p -- "$root/jobs" || { echo "cannot create $root/jobs" >&2; exit 3; }
new=$root/runner.sh.$$
: > "$new" || { echo "cannot write in $root (disk full?)" >&2; exit 3; }
while IFS= read -r line; do
  [ "$line" = "__runner_end__" ] && break
  printf '%s\n' "$line" >> "$new" || { rm -f -- "$new"; echo "cannot write $new (disk full?)" >&2; exit 3; }
done
if cmp -s -- "$new" "$root/runner.sh"; then rm -f -- "$new"; else mv -f -- "$new" "$root/runner.sh" || exit 3; fi
exec sh "$root/runner.sh" "$@"
