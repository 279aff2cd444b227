# Campaign: copies the files runs need into their remote run folders, checked by checksum, in one call.
# Standard input: "F sha256 content64" per distinct file, then per folder "D PATH" followed by its
# "P sha256 mode name" placements. A file already in place with the same checksum is left alone.
# Output: "ok i" or "fail i reason" per folder, then "END n". Exits 3 when a file arrived damaged.
pool=$(mktemp -d "${TMPDIR:-/tmp}/campaign-stage.XXXXXX") || { echo 'fail - cannot make a temporary folder'; exit 3; }
trap 'rm -rf "$pool"' EXIT
i=-1
bad=
finish() {
  if [ "$i" -ge 0 ]; then
    if [ -n "$bad" ]; then printf 'fail %s %s\n' "$i" "$bad"; else printf 'ok %s\n' "$i"; fi
  fi
}
while IFS= read -r line; do
  case $line in
    'F '*)
      rest=${line#F }
      sum=${rest%% *}
      printf '%s' "${rest#* }" | base64 -d > "$pool/$sum" || { echo "fail - cannot write $pool: disk full?"; exit 3; }
      got=$(sha256sum < "$pool/$sum" | cut -d ' ' -f 1)
      [ "$got" = "$sum" ] || { echo "fail - a staged file arrived damaged (sha256 $got, expected $sum)"; exit 3; }
      ;;
    'D '*)
      finish
      i=$((i + 1))
      dir=${line#D }
      bad=
      mkdir -p -- "$dir/logs" 2>/dev/null || bad="cannot create $dir/logs"
      ;;
    'P '*)
      [ -z "$bad" ] || continue
      rest=${line#P }
      sum=${rest%% *}
      rest=${rest#* }
      mode=${rest%% *}
      name=${rest#* }
      target=$dir/$name
      if [ -f "$target" ] && [ "$(sha256sum < "$target" | cut -d ' ' -f 1)" = "$sum" ]; then
        chmod "$mode" -- "$target" 2>/dev/null
        continue
      fi
      if cp -- "$pool/$sum" "$target.staging" 2>/dev/null && chmod "$mode" -- "$target.staging" \
        && [ "$(sha256sum < "$target.staging" | cut -d ' ' -f 1)" = "$sum" ] && mv -f -- "$target.staging" "$target"; then
        :
      else
        rm -f -- "$target.staging"
        bad="cannot write $target (disk full or no permission?)"
      fi
      ;;
  esac
done
finish
printf 'END %s\n' "$((i + 1))"
