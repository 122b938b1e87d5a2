package io.eigenmill.monitor.math;

import io.eigenmill.math.Linalg;

/**
 * The largest principal angle between two models' retained subspaces, compared on the features both models have and
 * in one set of coordinates: those of a reference model (its centring and scaling).
 *
 * <p>A model with scales s reconstructs x - mean as S V t (S = diag(s)), so its subspace in the reference's scaled
 * coordinates is spanned by S_ref^-1 S V: each row j of the other model's loadings is multiplied by
 * s[j] / s_ref[j] (1 when neither model standardises). The rows of features the other model does not have (a group
 * that dropped a constant column) are left out of both; the restriction of orthonormal columns is no longer
 * orthonormal, so both sides are re-orthonormalised before {@link PrincipalAngles#between}. Equal models give 0.
 */
public final class SharedSubspace {
  private SharedSubspace() {}

  /**
   * @param ref the reference's loadings on the shared features, column-major {@code d x kRef}
   * @param other the other model's loadings on the same features in the same order, {@code d x kOther}
   * @param toRef per shared feature, the other model's scale over the reference's (s[j] / s_ref[j])
   * @return the largest of the min(kRef, kOther) principal angles, in radians; NaN when a side has no component or
   *     more components than shared features (its restriction can then not be orthonormal)
   */
  public static double largestAngle(double[] ref, int kRef, double[] other, int kOther, double[] toRef, int d) {
    if (kRef <= 0 || kOther <= 0 || kRef > d || kOther > d) {
      return Double.NaN;
    }
    double[] a = java.util.Arrays.copyOf(ref, d * kRef);
    double[] b = java.util.Arrays.copyOf(other, d * kOther);
    for (int c = 0; c < kOther; c++) {
      for (int j = 0; j < d; j++) {
        b[j + c * d] *= toRef[j];
      }
    }
    Linalg.orthonormalizeColumns(a, d, kRef);
    Linalg.orthonormalizeColumns(b, d, kOther);
    double[] angles = PrincipalAngles.between(a, kRef, b, kOther, d);
    return angles.length == 0 ? Double.NaN : angles[angles.length - 1];
  }
}
