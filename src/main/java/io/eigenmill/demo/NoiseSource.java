package io.eigenmill.demo;

/**
 * A resettable random stream for the generator: SplitMix64 (Steele, Lea and Flood, "Fast splittable pseudorandom
 * number generators", OOPSLA 2014; the generator behind {@link java.util.SplittableRandom}). One instance is kept per
 * partition and {@link #reset} to a key derived from (seed, host, interval) before each row, so the values of a row
 * depend only on that key and never on which partition or thread produced it. No allocation after construction.
 *
 * <p>Not thread-safe; one per task.
 */
final class NoiseSource {
  private static final long GOLDEN = 0x9E3779B97F4A7C15L;

  private long state;
  private double spare;
  private boolean hasSpare;

  /** Restarts the stream at {@code key}; the next draws are a pure function of it. */
  void reset(long key) {
    state = key;
    hasSpare = false;
  }

  long nextLong() {
    state += GOLDEN;
    return mix64(state);
  }

  /** Uniform on [0, 1), 53 random bits. */
  double uniform() {
    return (nextLong() >>> 11) * 0x1.0p-53;
  }

  /** Uniform on [lo, hi). */
  double uniform(double lo, double hi) {
    return lo + (hi - lo) * uniform();
  }

  /** True with probability {@code p}. */
  boolean chance(double p) {
    return uniform() < p;
  }

  /** Uniform integer on [0, n), n > 0 (modulo bias below 2^-40 for the small n used here). */
  int below(int n) {
    return (int) ((nextLong() >>> 1) % n);
  }

  /** Standard normal by Marsaglia's polar method; the second value of each pair is kept for the next call. */
  double gaussian() {
    if (hasSpare) {
      hasSpare = false;
      return spare;
    }
    double u;
    double v;
    double s;
    do {
      u = 2 * uniform() - 1;
      v = 2 * uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s == 0);
    double f = Math.sqrt(-2 * Math.log(s) / s);
    spare = v * f;
    hasSpare = true;
    return u * f;
  }

  /** Normal with the given mean and standard deviation. */
  double gaussian(double mean, double sd) {
    return mean + sd * gaussian();
  }

  /** The SplitMix64 finaliser (a bijection of the 64-bit integers with good avalanche). */
  static long mix64(long z) {
    z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
    z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
    return z ^ (z >>> 31);
  }

  /** A key for the stream of one (seed, purpose, a, b): distinct inputs give unrelated streams. */
  static long key(long seed, long purpose, long a, long b) {
    long h = mix64(seed + GOLDEN);
    h = mix64(h ^ (purpose * 0xD1B54A32D192ED03L));
    h = mix64(h ^ (a * 0xAEF17502108EF2D9L + 0x632BE59BD9B4E019L));
    return mix64(h ^ (b * 0x8CB92BA72F3D8DD7L + 0x9FB21C651E98DF25L));
  }
}
