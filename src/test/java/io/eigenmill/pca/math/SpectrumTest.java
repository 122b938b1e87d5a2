package io.eigenmill.pca.math;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import com.fasterxml.jackson.databind.JsonNode;
import io.eigenmill.math.Linalg;
import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.ErrorBudget;
import io.eigenmill.testing.MathFixtures;
import org.junit.jupiter.api.Test;

/**
 * The derived quantities of {@link Spectrum} against brute-force sums and against the reference datasets'
 * {@code explained_variance_ratio}, {@code cumulative_ratio} and {@code n_components_90/95}
 * (src/test/resources/datasets, computed by R 4.2.2 and numpy, cross-checked with mpmath).
 */
class SpectrumTest {

  /**
   * Ratios from the reference eigenvalues: each ratio is one division (u relative), each cumulative ratio a sum of
   * up to d of them (gamma_d, Higham 2002 eq. 4.4), and the reference's own ratios carry the same (their JSON reports
   * agreement with mpmath to 3.3e-16 absolute). Tolerance 2 gamma_(d+1) absolute on values at most 1.
   */
  @Test
  void ratiosAndComponentCountsMatchTheReferenceDatasets() {
    for (String name : new String[] {"usarrests", "wine", "longley"}) {
      JsonNode reference = Datasets.reference(name);
      for (String kind : new String[] {"covariance", "correlation"}) {
        JsonNode pca = reference.get("pca").get(kind);
        double[] eigenvalues = Datasets.doubles(pca.get("eigenvalues"));
        int d = eigenvalues.length;
        double total = 0;
        for (double e : eigenvalues) {
          total += e;
        }
        Spectrum s = new Spectrum(d, eigenvalues, new double[d * d], total);
        double tol = 2 * MathFixtures.gamma(d + 1);
        String what = name + " " + kind;
        assertArrayEquals(Datasets.doubles(pca.get("explained_variance_ratio")), s.varianceShares(), tol, what);
        assertArrayEquals(Datasets.doubles(pca.get("cumulative_ratio")), s.cumulativeVarianceShares(), tol, what);
        assertEquals(pca.get("n_components_90").asInt(), s.smallestReaching(0.90), what + " k for 90%");
        assertEquals(pca.get("n_components_95").asInt(), s.smallestReaching(0.95), what + " k for 95%");
        assertEquals(d, s.smallestReaching(1.0), what + " k for 100%");
      }
    }
  }

  @Test
  void aPartialSpectrumCanFallShortOfTheTarget() {
    // the randomized route reports l eigenvalues and the full trace: 6 + 3 of a total 12 is 0.75
    Spectrum s = new Spectrum(4, new double[] {6, 3}, new double[8], 12);
    assertArrayEquals(new double[] {0.5, 0.25}, s.varianceShares(), 0.0);
    assertArrayEquals(new double[] {0.5, 0.75}, s.cumulativeVarianceShares(), 0.0);
    assertEquals(1, s.smallestReaching(0.5));
    assertEquals(2, s.smallestReaching(0.75));
    assertEquals(-1, s.smallestReaching(0.8));
    assertEquals(2, s.available());
  }

  @Test
  void aZeroTotalGivesZeroRatios() {
    Spectrum s = new Spectrum(2, new double[] {0, 0}, new double[4], 0);
    assertArrayEquals(new double[] {0, 0}, s.varianceShares(), 0.0);
  }

  @Test
  void loadingIndexesFeatureThenComponentColumnMajor() {
    double[] v = {1, 2, 3, 4, 5, 6};
    Spectrum s = new Spectrum(3, new double[] {2, 1}, v, 3);
    assertEquals(2, s.loading(1, 0), 0.0);
    assertEquals(6, s.loading(2, 1), 0.0);
  }

  /** ofCovariance: totalVariance is the trace of its input (brute-force sum), eigenvalues sum to it (Weyl). */
  @Test
  void ofCovarianceReportsTheTraceOfItsInput() {
    int d = 8;
    double[] g = MathFixtures.gaussian(50, d, 111);
    double[] c = MathFixtures.multiplyTransA(g, g, 50, d, d);
    Linalg.symmetrizeFromUpper(c, d);
    double trace = 0;
    for (int j = 0; j < d; j++) {
      trace += c[j + j * d];
    }
    Spectrum s = Spectrum.ofCovariance(c, d);
    assertEquals(trace, s.totalVariance(), 0.0);
    double sum = 0;
    for (double e : s.eigenvalues()) {
      sum += e;
    }
    // the sum of eigenvalues equals the trace exactly in exact arithmetic; dsyevd: SOLVER d ulp ||C|| each
    assertEquals(trace, sum, d * ErrorBudget.SOLVER * d * ErrorBudget.ULP * s.eigenvalues()[0]);
  }
}
