package io.eigenmill.bench;

import java.util.Arrays;

/** Wall seconds of the timed repetitions of one case (warm-ups excluded). */
public record Timing(double[] seconds) {

  public Timing {
    if (seconds.length == 0) {
      throw new IllegalArgumentException("a timing needs at least one repetition");
    }
    seconds = seconds.clone();
  }

  public double min() {
    return Arrays.stream(seconds).min().getAsDouble();
  }

  /** The median; the mean of the two middle values for an even count. */
  public double median() {
    double[] s = seconds.clone();
    Arrays.sort(s);
    int n = s.length;
    return n % 2 == 1 ? s[n / 2] : (s[n / 2 - 1] + s[n / 2]) / 2;
  }

  public int repetitions() {
    return seconds.length;
  }
}
