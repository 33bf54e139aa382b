// One polling loop for run status: calls `tick` every `everyMs` while `live()`
// is true (a run queued or running), stops when it turns false or the
// component goes away, and never overlaps two ticks.
export function useLivePoll(live: () => boolean, tick: () => Promise<unknown>, everyMs = 1500) {
  let timer: ReturnType<typeof setTimeout> | undefined
  let stopped = false
  const schedule = () => {
    clearTimeout(timer)
    if (stopped || !live()) return
    timer = setTimeout(async () => {
      try { await tick() } catch { /* a failed poll is retried on the next tick */ }
      schedule()
    }, everyMs)
  }
  onMounted(schedule)
  watch(live, (now) => { if (now) schedule() })
  onBeforeUnmount(() => { stopped = true; clearTimeout(timer) })
}
