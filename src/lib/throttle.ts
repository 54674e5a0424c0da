/**
 * Calls `fn` at most once per `waitMs`: the first call runs at once, calls inside the window
 * collapse into one trailing call at its end. `cancel` drops a pending trailing call.
 */
export function throttle(fn: () => void, waitMs: number): { (): void; cancel: () => void } {
  let last = 0;
  let timer: ReturnType<typeof setTimeout> | null = null;
  const run = () => {
    last = Date.now();
    timer = null;
    fn();
  };
  const throttled = () => {
    if (timer) return;
    const wait = last + waitMs - Date.now();
    if (wait <= 0) run();
    else timer = setTimeout(run, wait);
  };
  throttled.cancel = () => {
    if (timer) clearTimeout(timer);
    timer = null;
  };
  return throttled;
}
