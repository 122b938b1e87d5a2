package io.eigenmill.testing;

import static io.eigenmill.testing.MathFixtures.U;
import static io.eigenmill.testing.MathFixtures.gamma;

/**
 * Rounding-error budgets for the two exact PCA routes (covariance and TSQR) and for the EJML reference, for one data
 * matrix x (n x d, raw) with reference singular values sigma of its centred version. Every route's result is the
 * exact answer for a slightly perturbed input; the budgets bound that perturbation, and the tests turn them into
 * bounds on eigenvalues (Weyl), singular values (Weyl for singular values) and subspaces (Davis and Kahan 1970 for
 * symmetric matrices, Wedin 1972 for singular subspaces), following Golub and Van Loan, Matrix Computations, 4th ed.,
 * §8.1 and §8.6.
 *
 * <p>The constant 30 in the LAPACK and EJML backward errors (c d ulp ||A||, ulp = 2u = 2.2e-16) is recalled from
 * memory: it is the threshold LAPACK's own test programs accept for the ratio ||residual|| / (n ||A|| ulp).
 */
public final class ErrorBudget {
  /** LAPACK's ulp (dlamch('P')), 2u. */
  public static final double ULP = Math.ulp(1.0);
  /** Accepted ratio ||residual|| / (n ||A|| ulp) of a backward-stable dense eigen/SVD solver (see class comment). */
  public static final double SOLVER = 30;

  public final int n;
  public final int d;
  public final double[] sigma;
  public final double frobRaw;
  public final double frobCentred;
  public final double trace;
  public final double kappa;
  public final double meanShift;

  private ErrorBudget(int n, int d, double[] sigma, double frobRaw, double frobCentred, double trace,
      double kappa, double meanShift) {
    this.n = n;
    this.d = d;
    this.sigma = sigma;
    this.frobRaw = frobRaw;
    this.frobCentred = frobCentred;
    this.trace = trace;
    this.kappa = kappa;
    this.meanShift = meanShift;
  }

  public static ErrorBudget of(double[] x, int n, int d, double[] referenceSigma) {
    double[] centred = MathFixtures.centred(x, n, d);
    double kappa = 1;
    double shift = 0;
    double trace = 0;
    for (int j = 0; j < d; j++) {
      double mean = MathFixtures.columnMean(x, n, j);
      double ss = 0;
      double maxAbs = 0;
      for (int i = 0; i < n; i++) {
        ss += centred[i + j * n] * centred[i + j * n];
        maxAbs = Math.max(maxAbs, Math.abs(x[i + j * n]));
      }
      trace += ss / (n - 1);
      // condition number of the variance (Chan, Golub and LeVeque 1983); a zero column would have no finite one
      kappa = Math.max(kappa, ss > 0 ? Math.sqrt(1 + n * mean * mean / ss) : 1);
      // a computed mean is within 4 gamma_n max|x| of the exact one (Higham 2002, eq. 4.4, code and reference)
      double e = 4 * gamma(n) * maxAbs;
      shift += e * e;
    }
    return new ErrorBudget(n, d, referenceSigma.clone(), MathFixtures.normF(x), MathFixtures.normF(centred),
        trace, kappa, Math.sqrt(shift));
  }

  public double sigma1() {
    return sigma[0];
  }

  public double lambda1() {
    return sigma[0] * sigma[0] / (n - 1);
  }

  /** Eigenvalue of the reference: sigma_i^2 / (n - 1). */
  public double lambda(int i) {
    return sigma[i] * sigma[i] / (n - 1);
  }

  /**
   * ||Delta X||_2 of the reference: EJML's SVD is backward stable (SOLVER d ulp sigma_1) and the test's two-pass
   * centring moves each entry by at most 3u |x| (the rounded mean and the subtraction), so by 3u ||X||_F.
   */
  public double referenceX() {
    return SOLVER * d * ULP * sigma1() + 3 * U * frobRaw;
  }

  /**
   * ||F||_2, the perturbation of the TSQR route after {@code steps} QR steps (blocks plus merges), apart from the
   * column shift of {@link #shiftNorm}. Householder QR is exact for X + Delta X with ||Delta x_j|| <= gamma~_{m d}
   * ||x_j|| (Higham 2002, Thm 19.4; gamma~_k = c k u, c a small constant taken as 4); each step of the chain factors
   * (rows + d + 1) x d (the R so far, the block, and the row sqrt(w) delta of the means), so m sums to
   * n + steps (d + 1) (Demmel, Grigori, Hoemmen and Langou 2012, SIAM J. Sci. Comput. 34(1), show the tree variants
   * share this bound). dgesvd of R adds SOLVER d ulp sigma_1, and the subtraction of each block's centre rounds each
   * entry by at most 3u |x| (with the rounding of the mean's own digits; the rows of mean differences carry the same
   * relative error).
   */
  public double tsqrX(int steps) {
    double qr = gamma(4.0 * d * (n + (double) steps * (d + 1))) * frobCentred;
    return qr + SOLVER * d * ULP * sigma1() + 3 * U * frobRaw;
  }

  /**
   * ||1 e^T||_2 = sqrt(n) ||e||: centring on a computed mean that is off by e moves every column by a constant. The
   * all-ones vector is orthogonal to the exactly centred columns A, so (A + 1 e^T)^T (A + 1 e^T) = A^T A + n e e^T: a
   * positive semi-definite rank-one change, which only raises singular values, by at most min(s, s^2 / (2 sigma_i))
   * with s this norm.
   */
  public double shiftNorm() {
    return Math.sqrt(n) * meanShift;
  }

  /** Bound on |sigma_i(TSQR) - sigma_i(exact)|: Weyl for F plus the one-sided shift effect. */
  public double tsqrSigma(int steps, int i) {
    double s = shiftNorm();
    double shiftEffect = sigma[i] > 0 ? Math.min(s, s * s / (2 * sigma[i])) : s;
    return tsqrX(steps) + shiftEffect;
  }

  /**
   * ||C~ - C||_2 for the covariance implied by the TSQR route: with X~ = A + S + F (A exactly centred, S the shift,
   * A^T S = 0), X~^T X~ - A^T A = S^T S + A^T F + F^T A + S^T F + F^T S + F^T F.
   */
  public double tsqrC(int steps) {
    double f = tsqrX(steps);
    double s = shiftNorm();
    return (s * s + 2 * sigma1() * f + 2 * s * f + f * f) / (n - 1);
  }

  /** The perturbation of the covariance equivalent to a perturbation of X of norm e: (2 sigma_1 e + e^2)/(n-1). */
  public double asCovariance(double e) {
    return (2 * sigma1() * e + e * e) / (n - 1);
  }

  /**
   * ||Delta C||_2 of the covariance route after {@code blocks} blocks and merges: entry (a, b) of the accumulated
   * co-moments is within (gamma_{n + 8 blocks} + 8 u kappa) sqrt(C_aa C_bb) (MomentsTest), and the Frobenius norm
   * of [sqrt(C_aa C_bb)] is the trace; dsyevd adds SOLVER d ulp ||C||.
   */
  public double covarianceC(int blocks) {
    return (gamma(n + 8.0 * blocks) + 8 * U * kappa) * trace + SOLVER * d * ULP * lambda1();
  }

  /** The reference's perturbation seen as a perturbation of the covariance. */
  public double referenceC() {
    return asCovariance(referenceX());
  }

  /**
   * Davis-Kahan sin(theta) bound between two computed invariant subspaces, each exact for a perturbation of norm at
   * most {@code e} of the same matrix, when the wanted eigenvalues are separated by {@code gap} from the others: each
   * side is within e / (gap - e) of the exact subspace (the perturbed eigenvalues move by at most e, Weyl). At least
   * 1 when the gap does not exceed the perturbations.
   */
  public static double subspaceBound(double e1, double e2, double gap) {
    double one = gap > e1 ? e1 / (gap - e1) : 1;
    double two = gap > e2 ? e2 / (gap - e2) : 1;
    return Math.min(1.0, one + two);
  }
}
