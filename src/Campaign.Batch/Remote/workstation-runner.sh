# Campaign's workstation runner: runs job legs as detached processes on a workstation reached over SSH, at most
# CORES cores at a time, first come first served, an afterany dependency waiting for the earlier job. Its state is
# in files under ROOT/jobs/ID (request, env, supervisor.pid and script.pid with start times, exit), so jobs outlive
# the connection and the tracker. Linux only (/proc/PID/stat), with setsid and flock.
# Commands: submit (request on standard input), query ID..., cancel ID, find NAME FOLDER, supervise JOBFOLDER.
# Output lines: "ID id" (submit, find), "J id state code signal elapsed" (query). Exit 4: request refused;
# exit 3: the workstation's trouble (disk full, no permission).
root=$1 cores=$2 grace=$3 cmd=$4
shift 4
jobs=$root/jobs

get() { sed -n "s/^$1=//p" "$2/request" | head -n 1; }

starttime() {
  s=$(cat "/proc/$1/stat" 2>/dev/null) || return 1
  s=${s##*) }
  set -- $s
  [ "$1" = Z ] && return 1
  shift 19
  printf '%s' "$1"
}

alive() {
  [ -f "$1" ] || return 1
  read -r p t < "$1" || return 1
  [ -n "$p" ] && [ "$(starttime "$p")" = "$t" ]
}

ids() { ls -- "$jobs" | grep -E '^[0-9]+$' | sort -n; }

state() {
  j=$jobs/$1
  if [ ! -f "$j/request" ]; then echo 'missing - - -'; return; fi
  if [ -f "$j/exit" ]; then cat -- "$j/exit"; return; fi
  if [ ! -f "$j/supervisor.pid" ]; then echo 'queued - - -'; return; fi
  if alive "$j/supervisor.pid" || alive "$j/script.pid"; then echo 'running - - -'; return; fi
  if [ -f "$j/exit" ]; then cat -- "$j/exit"; return; fi
  echo 'vanished - - -'
}

launch() {
  setsid sh "$root/runner.sh" "$root" "$cores" "$grace" supervise "$1" </dev/null >/dev/null 2>&1 9>&- &
  pid=$!
  printf '%s %s\n' "$pid" "$(starttime "$pid")" > "$1/supervisor.pid"
}

schedule() {
  used=0
  for id in $(ids); do
    j=$jobs/$id
    if [ -f "$j/request" ] && [ ! -f "$j/exit" ] && [ -f "$j/supervisor.pid" ]; then used=$((used + $(get cores "$j"))); fi
  done
  for id in $(ids); do
    j=$jobs/$id
    [ -f "$j/request" ] && [ ! -f "$j/exit" ] && [ ! -f "$j/supervisor.pid" ] || continue
    after=$(get after "$j")
    if [ -n "$after" ]; then
      case $(state "$after") in queued* | running*) continue ;; esac
    fi
    c=$(get cores "$j")
    [ $((used + c)) -le "$cores" ] || break
    launch "$j"
    used=$((used + c))
  done
}

write_exit() {
  while ! { printf '%s\n' "$2" > "$1/exit.tmp" && mv -f -- "$1/exit.tmp" "$1/exit"; }; do sleep 5; done
}

supervise() {
  j=$1
  id=${j##*/}
  if [ -f "$j/cancel" ]; then write_exit "$j" 'stopped - - 0'; return; fi
  dir=$(get dir "$j") script=$(get script "$j") out=$(get out "$j") err=$(get err "$j") wall=$(get wall "$j")
  warn_signal=$(get warn_signal "$j") warn_seconds=$(get warn_seconds "$j")
  start=$(date +%s)
  if ! cd -- "$dir" 2>/dev/null || [ ! -x "$script" ]; then write_exit "$j" 'no_start - - 0'; return; fi
  (
    if [ -f "$j/env" ]; then
      while IFS= read -r kv; do export "$kv"; done < "$j/env"
    fi
    export CAMPAIGN_JOB_ID="$id"
    # Its own session and process group. The wrapper's traps are handlers, not "ignore", so the script gets
    # every signal with its default action; the wrapper writes the script's exit status.
    exec setsid sh -c 'trap : TERM USR1 USR2 INT HUP URG; "$1"; echo $? > "$2.tmp"; mv -f -- "$2.tmp" "$2"' campaign-job "$script" "$j/code"
  ) </dev/null >>"$out" 2>>"$err" &
  pid=$!
  printf '%s %s\n' "$pid" "$(starttime "$pid")" > "$j/script.pid"
  (
    warned=0 ending= killat=
    while :; do
      sleep 1
      el=$(($(date +%s) - start))
      if [ -z "$ending" ] && [ -f "$j/cancel" ]; then
        ending=stopped; echo stopped > "$j/ending"; kill -s TERM -- "-$pid" 2>/dev/null; killat=$((el + grace))
      elif [ -z "$ending" ] && [ "$el" -ge "$wall" ]; then
        ending=out_of_time; echo out_of_time > "$j/ending"; kill -s TERM -- "-$pid" 2>/dev/null; killat=$((el + grace))
      elif [ "$warned" = 0 ] && [ -n "$warn_signal" ] && [ "$el" -ge $((wall - warn_seconds)) ]; then
        warned=1; kill -s "$warn_signal" -- "-$pid" 2>/dev/null
      fi
      if [ -n "$killat" ] && [ "$el" -ge "$killat" ]; then kill -s KILL -- "-$pid" 2>/dev/null; fi
    done
  ) </dev/null >/dev/null 2>&1 &
  monitor=$!
  wait "$pid"
  code=$?
  kill "$monitor" 2>/dev/null
  kill -s KILL -- "-$pid" 2>/dev/null
  elapsed=$(($(date +%s) - start))
  [ -f "$j/code" ] && code=$(cat -- "$j/code")
  signal=0
  [ "$code" -gt 128 ] && signal=$((code - 128))
  if [ -f "$j/ending" ]; then s=$(cat -- "$j/ending"); elif [ "$code" = 0 ]; then s=succeeded; else s=crashed; fi
  write_exit "$j" "$s $code $signal $elapsed"
}

if [ "$cmd" = supervise ]; then
  supervise "$1"
  exit 0
fi

exec 9>>"$root/lock" || exit 3
flock 9 || exit 3
case $cmd in
  submit)
    n=$(cat -- "$root/next-id" 2>/dev/null || echo 1)
    { echo $((n + 1)) > "$root/next-id.tmp" && mv -f -- "$root/next-id.tmp" "$root/next-id"; } || { echo "cannot write in $root (disk full?)" >&2; exit 3; }
    j=$jobs/$n
    mkdir -p -- "$j" || exit 3
    : > "$j/request.tmp" && : > "$j/env" || { echo "cannot write in $j (disk full?)" >&2; exit 3; }
    while IFS= read -r line; do
      case $line in
        'env '*) printf '%s\n' "${line#env }" >> "$j/env" || exit 3 ;;
        *) printf '%s\n' "$line" >> "$j/request.tmp" || exit 3 ;;
      esac
    done
    printf 'submitted=%s\n' "$(date +%s)" >> "$j/request.tmp" || exit 3
    c=$(sed -n 's/^cores=//p' "$j/request.tmp")
    if [ "$c" -gt "$cores" ]; then
      rm -rf -- "$j"
      echo "the job needs $c cores; the workstation runner has $cores" >&2
      exit 4
    fi
    mv -f -- "$j/request.tmp" "$j/request" || exit 3
    schedule
    printf 'ID %s\n' "$n"
    ;;
  query)
    schedule
    for id in "$@"; do
      case $id in *[!0-9]* | '') printf 'J %s missing - - -\n' "$id"; continue ;; esac
      printf 'J %s %s\n' "$id" "$(state "$id")"
    done
    ;;
  cancel)
    id=$1
    j=$jobs/$id
    case $id in *[!0-9]* | '') exit 0 ;; esac
    [ -f "$j/request" ] && [ ! -f "$j/exit" ] || exit 0
    : > "$j/cancel"
    if [ ! -f "$j/supervisor.pid" ]; then
      write_exit "$j" 'stopped - - 0'
    elif ! alive "$j/supervisor.pid" && alive "$j/script.pid"; then
      read -r p t < "$j/script.pid"
      kill -s KILL -- "-$p" 2>/dev/null
      write_exit "$j" 'stopped - 9 0'
    fi
    ;;
  find)
    found=$(grep -lxF -- "name=$1" "$jobs"/*/request 2>/dev/null | while IFS= read -r f; do
      j=${f%/request}
      if [ "$(get dir "$j")" = "$2" ]; then echo "${j##*/}"; fi
    done | sort -n | tail -n 1)
    [ -z "$found" ] || printf 'ID %s\n' "$found"
    ;;
  *)
    echo "unknown command $cmd" >&2
    exit 2
    ;;
esac
