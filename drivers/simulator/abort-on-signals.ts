/**
 * An AbortSignal that fires on SIGINT/SIGTERM, for stopping the simulator
 * (or any long run) cleanly at the end of the block being written.
 */

/** Abort controller tied to process signals; call `dispose()` when done to remove the handlers. */
export function abortOnSignals(signals: readonly NodeJS.Signals[] = ['SIGINT', 'SIGTERM']): { signal: AbortSignal; dispose: () => void } {
  const ac = new AbortController();
  const onSignal = (sig: NodeJS.Signals): void => ac.abort(new Error(`stopped by ${sig}`));
  for (const s of signals) process.on(s, onSignal);
  return {
    signal: ac.signal,
    dispose: () => {
      for (const s of signals) process.off(s, onSignal);
    },
  };
}
