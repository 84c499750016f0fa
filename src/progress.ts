// Progress on stderr: a redrawn bar when stderr is a terminal, one line per stage otherwise, nothing with --quiet.
// Results never go here (they go to files and stdout).

export interface Progress {
  /** Start a stage of `total` steps (0 when unknown). */
  stage(name: string, total?: number): void;
  /** Steps done so far in the current stage. */
  tick(done: number): void;
  /** Close the current stage (prints its duration). */
  done(): void;
  /** A line of information (always a full line). */
  info(line: string): void;
}

export interface ProgressOptions {
  quiet?: boolean;
  /** Where to write; default process.stderr. */
  stream?: NodeJS.WriteStream;
  /** Force the bar on or off (default: stream.isTTY). */
  bar?: boolean;
}

export function makeProgress(opts: ProgressOptions = {}): Progress {
  const stream = opts.stream ?? process.stderr;
  if (opts.quiet) return { stage: () => {}, tick: () => {}, done: () => {}, info: () => {} };
  const bar = opts.bar ?? Boolean(stream.isTTY);
  let name = '';
  let total = 0;
  let started = 0;
  let lastDraw = 0;
  let open = false;
  const draw = (done: number) => {
    const width = 30;
    const frac = total > 0 ? Math.min(1, done / total) : 0;
    const filled = Math.round(frac * width);
    stream.write(`\r${name.padEnd(22)} [${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${done}/${total}`);
  };
  return {
    stage(n, t = 0) {
      if (open) this.done();
      name = n;
      total = t;
      started = performance.now();
      open = true;
      if (bar && total > 0) draw(0);
      else if (!bar) stream.write(`polysift: ${name}${total > 0 ? ` (${total})` : ''}...\n`);
    },
    tick(d) {
      if (!bar || total === 0) return;
      const now = performance.now();
      // Redraw at most 10 times a second so a fast stage is not slowed by the terminal.
      if (now - lastDraw < 100 && d < total) return;
      lastDraw = now;
      draw(d);
    },
    done() {
      if (!open) return;
      open = false;
      const seconds = ((performance.now() - started) / 1000).toFixed(2);
      if (bar) stream.write(`\r${name.padEnd(22)} done in ${seconds} s${' '.repeat(30)}\n`);
      else stream.write(`polysift: ${name} done in ${seconds} s\n`);
    },
    info(line) {
      if (open && bar) stream.write('\n');
      stream.write(`polysift: ${line}\n`);
    },
  };
}
