package io.eigenmill.pca.math;

import static io.eigenmill.testing.ErrorBudget.SOLVER;
import static io.eigenmill.testing.ErrorBudget.ULP;
import static io.eigenmill.testing.MathFixtures.gamma;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.MathFixtures;
import org.ejml.data.DMatrixRMaj;
import org.ejml.dense.row.CommonOps_DDRM;
import org.junit.jupiter.api.Test;

/**
 * The randomized route as FitJob runs it (start; for each of q power iterations a pass of SketchProduct.addBlock
 * over the blocks and next; one more pass; finish) on A = U S V^T with seeded orthonormal factors and a known
 * decaying spectrum, against EJML 0.43.1's SVD of A and a bound derived from Halko, Martinsson and Tropp (2011),
 * "Finding structure with randomness", SIAM Review 53(2), §9 (the deterministic analysis of the power scheme).
 *
 * <p>The bound. Let M = A^T A = V Lambda V^T (lambda_i = sigma_i^2), Omega the d x l start and C = V^T Omega. With q
 * power iterations the basis handed to finish spans S_q = range(M^q Omega). Split C after any l' in [k, l] rows,
 * C = [C1; C2], with C1 (l' x l) of full row rank, and let E_k be the first k columns of I_l'. Then M^q Omega C1^+ E_k
 * Lambda_k^-q = V_k + V_(>l') T with T = Lambda_2^q C2 C1^+ E_k Lambda_k^-q (HMT 2011, proof of Thm 9.1), so
 * S_q contains a k-dimensional subspace at tan(angle) <= t(q) = (sigma_(l'+1) / sigma_k)^(2q) ||C2 C1^+ E_k|| from the
 * top-k eigenvectors. We take the smallest t over l'. (Each pass multiplies by A^T A from the row space, so the
 * exponent is 2q where HMT's column-space power scheme, which starts from A Omega, has 2q + 1.) From t:
 * <ul>
 *   <li>sin of the largest angle between V_k and S_q is at most t;
 *   <li>the Ritz values satisfy lambda_i / (1 + t^2) <= theta_i <= lambda_i for i <= k: the upper bound is Cauchy's
 *       interlacing theorem, the lower one follows from interlacing (S_q contains the subspace above) and Ostrowski's
 *       theorem (Horn and Johnson, Matrix Analysis, Thm 4.5.9) applied to X^T M X >= Lambda_k with X^T X = I + T^T T;
 *   <li>the top-k Ritz vectors W_k: (lambda_k - lambda_(k+1)) ||sin Theta(V_k, W_k)||_F^2 <= sum_(i<=k) lambda_i -
 *       trace(W_k^T M W_k) <= sum_(i<=k) lambda_i t^2 / (1 + t^2), expanding W_k in the eigenvectors of M.
 * </ul>
 * Rounding adds a floor (see {@link #floors}).
 */
class RandomizedSubspaceTest {
  private static final int N = 400;
  private static final int D = 60;
  private static final int K = 5;
  private static final int L = 10;
  private static final long SEED = 20261201L;
  private static final int[] BLOCKS = {64, 1, 100};

  /** sigma: 100, 70, 50, 35, 25, then 6 * 0.9^(j - 5). */
  private static double[] designedSigma() {
    double[] s = new double[D];
    double[] top = {100, 70, 50, 35, 25};
    for (int j = 0; j < D; j++) {
      s[j] = j < K ? top[j] : 6 * Math.pow(0.9, j - K);
    }
    return s;
  }

  private static final double[] A = ExactSpectrumTest.designed(N, D, designedSigma(), 61);
  /** The reference: EJML's SVD of the A actually formed (rounding included). */
  private static final MathFixtures.Svd REF = MathFixtures.svd(A, N, D);

  private record Run(double[] basis, Spectrum spectrum) {}

  /** One pass: Z = A^T A Q over blocks in two partitions, merged. */
  private static double[] pass(double[] q) {
    SketchProduct total = SketchProduct.empty(D, L);
    for (int p = 0; p < 2; p++) {
      int start = p * N / 2;
      SketchProduct part = SketchProduct.empty(D, L);
      MathFixtures.feed(MathFixtures.rows(A, N, D, start, N / 2), N / 2, D, BLOCKS, 3,
          (b, rows, ld) -> part.addBlock(b, rows, ld, q));
      total.merge(part);
    }
    assertEquals(N, total.count());
    return total.product();
  }

  /** FitJob's loop: q + 1 passes, q calls of next. */
  private static Run run(int powerIterations, long seed) {
    double[] q = RandomizedSubspace.start(D, L, seed);
    double[] z = null;
    for (int it = 0; it <= powerIterations; it++) {
      z = pass(q);
      if (it < powerIterations) {
        q = RandomizedSubspace.next(z, D, L);
      }
    }
    double[] basis = q.clone();
    return new Run(basis, RandomizedSubspace.finish(q, z, D, L, N, 123.0));
  }

  private static double lambda(int i) {
    return REF.values()[i] * REF.values()[i];
  }

  /** ||C2 C1^+ E_k||_2 for the split after l' rows of C = V^T Q0 (EJML pseudo-inverse and norm). */
  private static double g(double[] c, int lPrime) {
    DMatrixRMaj cm = MathFixtures.toEjml(c, D, L);
    DMatrixRMaj c1 = CommonOps_DDRM.extract(cm, 0, lPrime, 0, L);
    DMatrixRMaj c2 = CommonOps_DDRM.extract(cm, lPrime, D, 0, L);
    DMatrixRMaj pinv = new DMatrixRMaj(L, lPrime);
    CommonOps_DDRM.pinv(c1, pinv);
    DMatrixRMaj pinvK = CommonOps_DDRM.extract(pinv, 0, L, 0, K);
    DMatrixRMaj prod = new DMatrixRMaj(D - lPrime, K);
    CommonOps_DDRM.mult(c2, pinvK, prod);
    return MathFixtures.norm2(MathFixtures.fromEjml(prod), D - lPrime, K);
  }

  /** t(q) of the class comment for the start of {@code seed}; C is computed from the orthonormalised start. */
  private static double t(int q, long seed) {
    // C2 C1^+ is the same for Omega and for its orthonormalised Omega R^-1 (R invertible, C1 of full row rank)
    double[] c = MathFixtures.multiplyTransA(REF.right(), RandomizedSubspace.start(D, L, seed), D, D, L);
    double best = Double.POSITIVE_INFINITY;
    for (int lPrime = K; lPrime <= L; lPrime++) {
      double ratio = REF.values()[lPrime] / REF.values()[K - 1];
      best = Math.min(best, Math.pow(ratio, 2 * q) * g(c, lPrime));
    }
    // relative rounding of the pseudo-inverse and norm computed in the test
    return best * (1 + 1e-8);
  }

  /**
   * Rounding floors after q power iterations: [eigenvalue (absolute, in units of A^T A), sine of angles]. Each pass
   * computes Z = A^T (A Q) with ||Delta Z||_2 <= (gamma_n + gamma_d) sqrt(l) ||A||_F^2 (Higham 2002, §3.5, for the
   * two products with ||Q||_F = sqrt(l)); finish adds SOLVER l ulp ||Q^T Z|| from dsyevd, the Householder
   * orthonormalisations SOLVER d ulp ||M|| each, and EJML's reference SVD SOLVER d ulp sigma_1 on sigma and so
   * 2 SOLVER d ulp lambda_1 on lambda. The angle floor is that perturbation over the gap lambda_k - lambda_(k+1) for
   * each of the q + 1 passes (Davis-Kahan).
   */
  private static double[] floors(int q) {
    double frob2 = 0;
    for (double s : REF.values()) {
      frob2 += s * s;
    }
    double perPass = (gamma(N) + gamma(D)) * Math.sqrt(L) * frob2 + SOLVER * D * ULP * lambda(0);
    double eigen = perPass + SOLVER * L * ULP * lambda(0) + 2 * SOLVER * D * ULP * lambda(0);
    double angle = (q + 1) * perPass / (lambda(K - 1) - lambda(K));
    return new double[] {eigen, angle};
  }

  @Test
  void recoversTheTopEigenvaluesAndSubspaceWithinTheDerivedBound() {
    double sumTop = 0;
    for (int i = 0; i < K; i++) {
      sumTop += lambda(i);
    }
    for (int q = 1; q <= 4; q++) {
      Run r = run(q, SEED);
      double t = t(q, SEED);
      double[] floor = floors(q);
      assertTrue(t < 0.5, "the bound must be informative at q = " + q + ": t = " + t);
      // the basis handed to finish
      double sinBasis = largestSinToBasis(r.basis());
      assertTrue(sinBasis <= t + floor[1], "q = " + q + ": basis at sin " + sinBasis + " > " + (t + floor[1]));
      // Ritz values, in units of A^T A (finish divides by n - 1)
      double[] theta = r.spectrum().eigenvalues();
      for (int i = 0; i < K; i++) {
        double value = theta[i] * (N - 1);
        assertTrue(value <= lambda(i) + floor[0], "q = " + q + ": Ritz value " + i + " above lambda_i");
        assertTrue(value >= lambda(i) / (1 + t * t) - floor[0],
            "q = " + q + ": Ritz value " + i + " = " + value + " < " + lambda(i) / (1 + t * t));
      }
      // top-k Ritz vectors
      double[] wk = MathFixtures.leadingColumns(r.spectrum().loadings(), D, K);
      double[] vk = MathFixtures.leadingColumns(REF.right(), D, K);
      double sin = MathFixtures.sinLargestAngle(wk, vk, D, K);
      double bound = Math.sqrt(t * t / (1 + t * t) * sumTop / (lambda(K - 1) - lambda(K))) + floor[1];
      assertTrue(sin <= bound, "q = " + q + ": Ritz vectors at sin " + sin + " > " + bound);
    }
  }

  /** sin of the largest angle between V_k and the span of the l basis columns. */
  private static double largestSinToBasis(double[] basis) {
    double[] vk = MathFixtures.leadingColumns(REF.right(), D, K);
    // ||(I - Q Q^T) V_k||_2 with Q orthonormal d x l
    double[] qtv = MathFixtures.multiplyTransA(basis, vk, D, L, K);
    double[] proj = MathFixtures.multiply(basis, qtv, D, L, K);
    for (int i = 0; i < proj.length; i++) {
      proj[i] = vk[i] - proj[i];
    }
    return MathFixtures.norm2(proj, D, K);
  }

  /**
   * Ritz values never decrease from one power iteration to the next (exact arithmetic): for PSD M and any x,
   * R(M x) >= R(x) for the Rayleigh quotient R, since (x^T M^3 x)(x^T x) >= (x^T M x)(x^T M^2 x) by Chebyshev's
   * sum inequality over the spectral weights of x; Courant-Fischer over the image M U of the optimal i-dimensional U
   * in S_q, which lies in S_(q+1), then gives theta_i(q + 1) >= theta_i(q). With lambda_i >= theta_i, the error of
   * every Ritz value is non-increasing in q, up to the rounding floor. From q = 0, which is the Rayleigh-Ritz step on
   * the random start itself.
   */
  @Test
  void morePowerIterationsDoNotMakeItWorse() {
    double[] previous = null;
    for (int q = 0; q <= 4; q++) {
      double[] theta = run(q, SEED).spectrum().eigenvalues();
      if (previous != null) {
        double floor = 2 * floors(q)[0] / (N - 1);
        for (int i = 0; i < L; i++) {
          assertTrue(theta[i] >= previous[i] - floor, "q = " + q + ": Ritz value " + i + " fell from "
              + previous[i] + " to " + theta[i]);
        }
      }
      previous = theta;
    }
    // and the guarantee itself tightens geometrically, by (sigma_(l'+1)/sigma_k)^2 per pass at the minimising l'
    for (int q = 1; q <= 4; q++) {
      assertTrue(t(q, SEED) < t(q - 1, SEED), "t(q) must decrease");
    }
  }

  /**
   * The same seed gives the same start and the same result, to rounding; another seed another start. Not bit for
   * bit: with the native LAPACK the Householder QR of start and next (dgeqrf, dorgqr, whose level-2 updates run on
   * the caller's arrays) can round differently from one call to the next on identical input (2 distinct results in
   * 50 identical calls were seen on this machine), so two runs are two computations of the same exact-arithmetic
   * iteration, each within the rounding floors: Ritz values within 2 floor, top-k Ritz vectors within
   * 2 (angle floor + eigenvalue floor / gap) (Davis-Kahan on the small Rayleigh-Ritz problem).
   */
  @Test
  void theSameSeedGivesTheSameResultAndAnotherSeedAnotherStart() {
    double[] s1 = RandomizedSubspace.start(D, L, SEED);
    double[] s2 = RandomizedSubspace.start(D, L, SEED);
    double[] other = RandomizedSubspace.start(D, L, SEED + 1);
    ExactSpectrumTest.assertOrthonormalColumns(s1, D, L);
    // two orthonormalisations of the same Gaussian: Householder QR is backward stable, each within SOLVER d ulp
    assertArrayEquals(s1, s2, 2 * SOLVER * D * ULP, "same seed, same start");
    assertTrue(MathFixtures.sinLargestAngle(s1, other, D, L) > 0.1, "another seed must span another subspace");
    int q = 2;
    Spectrum a = run(q, SEED).spectrum();
    Spectrum b = run(q, SEED).spectrum();
    double[] floor = floors(q);
    for (int i = 0; i < L; i++) {
      assertEquals(a.eigenvalues()[i], b.eigenvalues()[i], 2 * floor[0] / (N - 1), "Ritz value " + i);
    }
    for (int i = 0; i < K; i++) {
      double gap = Double.POSITIVE_INFINITY;
      for (int j = 0; j < L; j++) {
        if (j != i) {
          gap = Math.min(gap, Math.abs(a.eigenvalues()[i] - a.eigenvalues()[j]) * (N - 1));
        }
      }
      double tol = 2 * (floor[1] + floor[0] / gap);
      double diff = 0;
      for (int j = 0; j < D; j++) {
        double e = a.loading(j, i) - b.loading(j, i);
        diff += e * e;
      }
      assertTrue(Math.sqrt(diff) <= tol, "component " + i + " differs by " + Math.sqrt(diff) + " > " + tol
          + " (a sign flip would show as 2)");
    }
  }

  @Test
  void finishReportsWhatItWasGiven() {
    Run r = run(2, SEED);
    Spectrum s = r.spectrum();
    assertEquals(D, s.d());
    assertEquals(L, s.available());
    assertEquals(D * L, s.loadings().length);
    assertEquals(123.0, s.totalVariance(), 0.0);
    ExactSpectrumTest.assertOrthonormalColumns(s.loadings(), D, L);
    for (int c = 0; c < L; c++) {
      // the sign convention (brute force of SignConventionTest): the loading of largest absolute value is positive
      int lead = SignConventionTest.leader(s.loadings(), D, c);
      assertTrue(s.loading(lead, c) > 0, "component " + c + " has a negative leading loading");
    }
  }
}
