# Campaign: reads many run folders on a remote site in one call and prints one line-oriented document.
# Arguments: done marker, progress file, 1 to read progress from the leg logs, checkpoint folder (relative),
# checkpoint file pattern, checkpoint marker, 1 to verify checksums, bytes of each progress tail.
# Standard input: one line per folder: "1 PATH" (sizes wanted) or "0 PATH".
# Output: "R i" per folder, then "X" (no such folder) or "D 0|1", "K size mtime marker sum name64" per
# checkpoint, "T cut text64" (progress tail), "L cut text64" per leg log tail, "Z kib" (size); "END n" last.
done_marker=$1 progress_file=$2 from_logs=$3 ck_dir=$4 ck_glob=$5 ck_marker=$6 verify=$7 tail_bytes=$8
IFS='
'
b64() { base64 | tr -d '\n'; }
i=0
while IFS= read -r line; do
  sizes=${line%% *}
  dir=${line#* }
  printf 'R %s\n' "$i"
  i=$((i + 1))
  if [ ! -d "$dir" ]; then
    printf 'X\n'
    continue
  fi
  if [ -e "$dir/$done_marker" ]; then printf 'D 1\n'; else printf 'D 0\n'; fi
  for f in "$dir/$ck_dir"/$ck_glob; do
    [ -f "$f" ] || continue
    case $f in *.sha256) continue ;; esac
    if [ -n "$ck_marker" ]; then
      case $f in *"$ck_marker") continue ;; esac
    fi
    st=$(stat -c '%s %Y' -- "$f") || continue
    m=0
    if [ -n "$ck_marker" ] && [ -e "$f$ck_marker" ]; then m=1; fi
    s=-
    if [ "$verify" = 1 ]; then
      if [ -f "$f.sha256" ]; then
        want=$(cut -d ' ' -f 1 < "$f.sha256" | tr 'A-F' 'a-f')
        got=$(sha256sum < "$f" | cut -d ' ' -f 1)
        if [ -n "$want" ] && [ "$want" = "$got" ]; then s=ok; else s=bad; fi
      else
        s=none
      fi
    fi
    printf 'K %s %s %s %s\n' "$st" "$m" "$s" "$(printf '%s' "${f##*/}" | b64)"
  done
  if [ "$from_logs" = 1 ]; then
    n=0
    for l in "$dir"/logs/*.out; do [ -f "$l" ] && n=$((n + 1)); done
    k=0
    for l in "$dir"/logs/*.out; do
      [ -f "$l" ] || continue
      k=$((k + 1))
      [ $((n - k)) -lt 3 ] || continue
      size=$(stat -c '%s' -- "$l")
      cut=0; [ "$size" -gt "$tail_bytes" ] && cut=1
      printf 'L %s %s\n' "$cut" "$(tail -c "$tail_bytes" -- "$l" | b64)"
    done
  elif [ -f "$dir/$progress_file" ]; then
    size=$(stat -c '%s' -- "$dir/$progress_file")
    cut=0; [ "$size" -gt "$tail_bytes" ] && cut=1
    printf 'T %s %s\n' "$cut" "$(tail -c "$tail_bytes" -- "$dir/$progress_file" | b64)"
  fi
  if [ "$sizes" = 1 ]; then
    printf 'Z %s\n' "$(du -sk -- "$dir" | cut -f 1)"
  fi
done
printf 'END %s\n' "$i"
