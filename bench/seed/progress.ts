/**
 * A progress bar on stderr (redrawn at most ten times a second on a terminal; a line every
 * tenth of the way otherwise), so stdout keeps only the summary.
 */
export class Progress {
  private done = 0;
  private lastDraw = 0;
  private lastTenth = -1;
  private readonly started = Date.now();
  private readonly tty = Boolean(process.stderr.isTTY);

  constructor(
    private readonly label: string,
    private readonly total: number,
    private readonly unit: string,
  ) {
    this.draw(true);
  }

  tick(n: number): void {
    this.done += n;
    this.draw(false);
  }

  finish(): void {
    this.done = Math.max(this.done, this.total);
    this.draw(true);
    if (this.tty) process.stderr.write('\n');
  }

  private draw(force: boolean): void {
    const now = Date.now();
    const share = this.total === 0 ? 1 : Math.min(1, this.done / this.total);
    const elapsedS = (now - this.started) / 1000;
    const rate = elapsedS > 0 ? this.done / elapsedS : 0;
    const etaS = rate > 0 ? (this.total - this.done) / rate : 0;
    const text =
      `${this.label.padEnd(16)} ${Math.round(share * 100)
        .toString()
        .padStart(3)} % ${this.done.toLocaleString('en-US')}/${this.total.toLocaleString('en-US')} ${this.unit}` +
      `, ${Math.round(rate).toLocaleString('en-US')}/s, ${elapsedS.toFixed(1)} s${share < 1 ? `, ~${Math.ceil(etaS)} s left` : ''}`;
    if (this.tty) {
      if (!force && now - this.lastDraw < 100) return;
      this.lastDraw = now;
      const width = 24;
      const filled = Math.round(share * width);
      process.stderr.write(`\r[${'#'.repeat(filled)}${'-'.repeat(width - filled)}] ${text}\x1b[K`);
      return;
    }
    const tenth = Math.floor(share * 10);
    if (tenth === this.lastTenth && !force) return;
    if (tenth === this.lastTenth && share < 1) return;
    this.lastTenth = tenth;
    process.stderr.write(`${text}\n`);
  }
}
