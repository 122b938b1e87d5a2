package io.eigenmill.math;

import jdk.incubator.vector.DoubleVector;
import jdk.incubator.vector.VectorOperators;
import jdk.incubator.vector.VectorSpecies;

/**
 * The SIMD kernel of {@link ShiftedCopy}: values in groups of the preferred number of double lanes, each group
 * subtracted and stored at once, x * 0 accumulated lane by lane (any NaN stays NaN whatever the order, which is all
 * the answer depends on). Values past the last full group take the scalar loop. Loaded only when the JVM resolved
 * {@code jdk.incubator.vector} ({@link SimdChoice}).
 */
final class LaneShiftedCopy implements ShiftedCopy {
  private static final VectorSpecies<Double> LANES = DoubleVector.SPECIES_PREFERRED;

  static int lanes() {
    return LANES.length();
  }

  @Override
  public boolean copy(double[] src, int from, double[] dst, int off, int t, double o) {
    DoubleVector zeros = DoubleVector.zero(LANES);
    int upper = LANES.loopBound(t);
    int i = 0;
    for (; i < upper; i += LANES.length()) {
      DoubleVector x = DoubleVector.fromArray(LANES, src, from + i);
      x.sub(o).intoArray(dst, off + i);
      zeros = zeros.add(x.mul(0.0));
    }
    double z = zeros.reduceLanes(VectorOperators.ADD);
    for (; i < t; i++) {
      double x = src[from + i];
      dst[off + i] = x - o;
      z += x * 0.0;
    }
    return z != 0.0;
  }

  @Override
  public String describe() {
    return "SIMD, " + LANES.length() + " double lanes";
  }
}
