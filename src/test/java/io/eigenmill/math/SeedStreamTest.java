package io.eigenmill.math;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/**
 * Unit numbers behave as independent uniforms: for 100,000 identities the mean is within 5 standard errors of 1/2
 * (1 / sqrt(12 n) = 9.1e-4) and the chi-square over 20 equal bins stays below 43.8, the 0.999 quantile of chi-square
 * with 19 degrees of freedom (standard tables); two streams that differ only in the round agree on about half of the
 * "u < 1/2" decisions (binomial, 5 standard errors of 0.0016).
 */
class SeedStreamTest {
  static final int N = 100_000;

  @Test
  void uniformAndIndependentAcrossStreams() {
    long s1 = SeedStream.stream(7, SeedStream.OVERSAMPLE, 3, 0, 1);
    long s2 = SeedStream.stream(7, SeedStream.OVERSAMPLE, 3, 0, 2);
    assertNotEquals(s1, s2);
    double sum = 0;
    long[] bins = new long[20];
    int agree = 0;
    for (long id = 0; id < N; id++) {
      double u = SeedStream.unit(s1, id * 31 + 5);
      assertTrue(u >= 0 && u < 1);
      sum += u;
      bins[(int) (u * 20)]++;
      if ((u < 0.5) == (SeedStream.unit(s2, id * 31 + 5) < 0.5)) {
        agree++;
      }
    }
    assertEquals(0.5, sum / N, 5 / Math.sqrt(12.0 * N));
    double chi = 0;
    for (long b : bins) {
      chi += (b - N / 20.0) * (b - N / 20.0) / (N / 20.0);
    }
    assertTrue(chi < 43.8, "chi-square " + chi);
    assertEquals(0.5, agree / (double) N, 5 * 0.5 / Math.sqrt(N));
    assertEquals(SeedStream.unit(s1, 12345), SeedStream.unit(s1, 12345), 0.0, "a function of its arguments");
  }
}
