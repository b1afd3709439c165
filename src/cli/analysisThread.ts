// Where `analyze` runs the analysis. A worker thread lets Ctrl-C stop a long analysis with a
// message and exit code 130 while a progress bar is drawn; it costs a second load of the engine
// in that thread and a copy of the whole result back to this one (about 0.3 s at 4,000 trials).
// With `--data` and no terminal on stderr there is no bar to draw and nothing is stored, so the
// analysis runs in this thread: a signal then ends the process by its default action, before
// the output file is renamed into place, and nothing is left behind to clean up.
export function analyseInThisThread(data: string | undefined, stderr: { readonly isTTY?: boolean } = process.stderr): boolean {
  return data !== undefined && stderr.isTTY !== true;
}
