# Shared by peak_memory.sh and cache_memory.sh (sourced, not run): a process's memory and CPU read from /proc.
# VmRSS and VmHWM in kB.
rss_kb() { awk '/^VmRSS:/ { print $2 }' "/proc/$1/status"; }
hwm_kb() { awk '/^VmHWM:/ { print $2 }' "/proc/$1/status"; }
# Sets VmHWM back to the present VmRSS (Linux `clear_refs`, value 5), so the next hwm_kb is the peak of what
# ran since; a kernel that refuses leaves the peak since start.
reset_hwm() { echo 5 > "/proc/$1/clear_refs" 2>/dev/null || true; }

# CPU ticks the process has used (utime + stime).
cpu_ticks() { awk '{ sub(/.*\) /, ""); print $12 + $13 }' "/proc/$1/stat"; }

# Waits until the process has used no CPU for two seconds (at most 300 s): work a request left running
# after its answer (an abandoned registration) has ended by then.
settle() {
    local last now
    last="$(cpu_ticks "$1")"
    for _ in $(seq 150); do
        sleep 2
        now="$(cpu_ticks "$1")"
        [ "$now" = "$last" ] && return
        last="$now"
    done
}
