/** A one-line progress display on a terminal (stderr); silent when stderr is not a terminal or --quiet. */
export class ProgressLine {
  private last = 0;
  private shown = false;
  private readonly on: boolean;

  constructor(
    private readonly label: string,
    quiet = false,
  ) {
    this.on = !quiet && process.stderr.isTTY === true;
  }

  update = (fraction: number, stage: string): void => {
    if (!this.on) return;
    const now = Date.now();
    if (now - this.last < 100 && fraction < 1) return;
    this.last = now;
    const pct = Math.round(Math.max(0, Math.min(1, fraction)) * 100);
    const width = 24;
    const filled = Math.round((pct / 100) * width);
    process.stderr.write(
      `\r${this.label}: [${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${String(pct).padStart(3)}% ${stage}\x1b[K`,
    );
    this.shown = true;
  };

  done(): void {
    if (this.shown) process.stderr.write('\r\x1b[K');
    this.shown = false;
  }
}
