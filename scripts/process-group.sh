# Sourced by start.sh, test.sh and stop.sh. Each long-running process they start (web server, worker) runs in its
# own process group whose id is its pid, so stopping the group also stops the children (Next's server workers).
#
# stop_group PID [TENTHS]: SIGTERM to the group (or the process), wait up to TENTHS × 0.1 s (default 100), then
# SIGKILL. Returns 0 when it stopped by itself (or was not running), 1 when it had to be killed.
stop_group() {
  local pid=$1 tenths=${2:-100}
  [ -n "$pid" ] || return 0
  kill -TERM -- "-$pid" 2>/dev/null || kill -TERM "$pid" 2>/dev/null || return 0
  for _ in $(seq 1 "$tenths"); do
    kill -0 "$pid" 2>/dev/null || return 0
    sleep 0.1
  done
  kill -KILL -- "-$pid" 2>/dev/null || kill -KILL "$pid" 2>/dev/null || true
  return 1
}
