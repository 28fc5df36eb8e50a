/**
 * Sine and cosine of angles in degrees written with at most three decimals (what instruments and files report),
 * remembered per millidegree: rows without ray structure bring new angles on every row, and four library calls per
 * row were a tenth of a run's time.
 *
 * Exactness: an angle is looked up only when it equals k / 1000 for an integer k (k = round(deg * 1000)); then the
 * remembered values were computed from the same double by the same expression, so they are the values the direct
 * computation gives, bit for bit. Any other angle (more decimals, radians converted to degrees) is computed
 * directly, and so is zero (+0 and -0 would share an entry). Memory: 16 bytes per millidegree of the range, allocated on the first use (azimuth [0, 360): 5.8 MB;
 * elevation [-90, 90]: 2.9 MB), the same for any number of samples.
 */
const PER_DEG = 1000;

export class SinCosCache {
  /** [sin, cos] of k / 1000 degrees at 2 * (k - kMin); NaN until computed. */
  private table: Float64Array | null = null;
  private readonly kMin: number;
  private readonly kMax: number;
  /** sin and cos of the last angle given to sinCos. */
  sin = NaN;
  cos = NaN;

  constructor(minDeg: number, maxDeg: number) {
    this.kMin = Math.round(minDeg * PER_DEG);
    this.kMax = Math.round(maxDeg * PER_DEG);
  }

  /** Sets this.sin and this.cos to Math.sin and Math.cos of deg * PI / 180 (the same doubles). */
  sinCos(deg: number): void {
    const k = Math.round(deg * PER_DEG);
    // Zero is computed directly: +0 and -0 compare equal but their sines differ in sign.
    if (k >= this.kMin && k <= this.kMax && k / PER_DEG === deg && deg !== 0) {
      const t = this.table ?? this.allocate();
      const j = 2 * (k - this.kMin);
      const s = t[j];
      if (s === s) {
        this.sin = s;
        this.cos = t[j + 1];
        return;
      }
      const a = (deg * Math.PI) / 180;
      this.sin = t[j] = Math.sin(a);
      this.cos = t[j + 1] = Math.cos(a);
      return;
    }
    const a = (deg * Math.PI) / 180;
    this.sin = Math.sin(a);
    this.cos = Math.cos(a);
  }

  private allocate(): Float64Array {
    this.table = new Float64Array(2 * (this.kMax - this.kMin + 1)).fill(NaN);
    return this.table;
  }
}
