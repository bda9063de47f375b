/**
 * Coalesces render requests into at most one call of `render` per animation frame: however
 * many socket messages arrive between two frames, the charts get one `setData` each.
 *
 * @example
 * const schedule = frameScheduler(() => drawAll());
 * schedule(); schedule(); // drawAll runs once, on the next animation frame
 */
export function frameScheduler(render: () => void, raf: (cb: () => void) => unknown = (cb) => requestAnimationFrame(cb)): () => void {
  let pending = false;
  return () => {
    if (pending) return;
    pending = true;
    raf(() => {
      pending = false;
      render();
    });
  };
}
