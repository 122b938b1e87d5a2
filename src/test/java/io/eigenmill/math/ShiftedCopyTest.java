package io.eigenmill.math;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The two copy kernels against the rule their javadoc states, written out plainly (each value minus the origin, one
 * IEEE subtraction; report when a value is NaN or infinite, {@code !Double.isFinite}), and so against each other.
 * Lengths around the lane counts (tails), values at every position of a run NaN or infinite, origins 0 (a copy: the
 * bits of x, -0.0 included) and not. Exact comparisons of the bits.
 */
class ShiftedCopyTest {
  private static final double[] SPECIAL = {Double.NaN, Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY};

  private static ShiftedCopy[] kernels() {
    return new ShiftedCopy[] {new ShiftedCopy.Scalar(), ShiftedCopy.Chosen.choose("auto", true)};
  }

  private static void check(ShiftedCopy kernel, double[] src, int from, int t, double o) {
    int off = 3;
    double[] dst = new double[off + t + 2];
    java.util.Arrays.fill(dst, 7.0);
    boolean reported = kernel.copy(src, from, dst, off, t, o);
    double[] expected = new double[dst.length];
    java.util.Arrays.fill(expected, 7.0);
    boolean anyNotFinite = false;
    for (int i = 0; i < t; i++) {
      expected[off + i] = src[from + i] - o;
      anyNotFinite |= !Double.isFinite(src[from + i]);
    }
    String what = kernel.describe() + ", " + t + " values from " + from + ", origin " + o;
    assertEquals(anyNotFinite, reported, what);
    for (int i = 0; i < dst.length; i++) {
      assertEquals(Double.doubleToRawLongBits(expected[i]), Double.doubleToRawLongBits(dst[i]), what + ", at " + i);
    }
  }

  @Test
  void finiteRunsOfEveryLengthAroundTheLanes() {
    SplittableRandom r = new SplittableRandom(5);
    double[] src = new double[80];
    for (int i = 0; i < src.length; i++) {
      src[i] = i % 11 == 0 ? -0.0 : (r.nextDouble() - 0.5) * Math.pow(10, r.nextInt(-5, 12));
    }
    for (ShiftedCopy kernel : kernels()) {
      for (int t = 0; t <= 40; t++) {
        for (int from : new int[] {0, 1, 5}) {
          for (double o : new double[] {0.0, 1e6 + 0.25, -3.5}) {
            check(kernel, src, from, t, o);
          }
        }
      }
    }
  }

  @Test
  void aNanOrInfinityAnywhereIsReported() {
    for (ShiftedCopy kernel : kernels()) {
      for (int t : new int[] {1, 3, 4, 7, 8, 9, 16, 17, 33}) {
        for (int at = 0; at < t; at++) {
          for (double special : SPECIAL) {
            double[] src = new double[t + 4];
            for (int i = 0; i < src.length; i++) {
              src[i] = i * 0.5 - 1;
            }
            src[2 + at] = special;
            check(kernel, src, 2, t, 1.0);
          }
        }
      }
    }
  }

  @Test
  void aShiftInPlaceGivesTheSameValuesAndAnswer() {
    SplittableRandom r = new SplittableRandom(9);
    for (ShiftedCopy kernel : kernels()) {
      for (int t : new int[] {0, 3, 8, 13, 37}) {
        double[] src = new double[t + 6];
        for (int i = 0; i < src.length; i++) {
          src[i] = r.nextDouble() * 1e3;
        }
        if (t > 4) {
          src[3 + t / 2] = Double.NaN;
        }
        double[] inPlace = src.clone();
        double[] apart = new double[src.length];
        boolean a = kernel.copy(inPlace, 3, inPlace, 3, t, 250.5);
        boolean b = kernel.copy(src, 3, apart, 3, t, 250.5);
        assertEquals(b, a, kernel.describe() + ", " + t + " values");
        for (int i = 0; i < t; i++) {
          assertEquals(Double.doubleToRawLongBits(apart[3 + i]), Double.doubleToRawLongBits(inPlace[3 + i]),
              kernel.describe() + ", value " + i);
        }
      }
    }
  }

  @Test
  void valuesOutsideTheRunDoNotCount() {
    double[] src = {Double.NaN, 1, 2, 3, 4, 5, 6, 7, 8, 9, Double.POSITIVE_INFINITY};
    for (ShiftedCopy kernel : kernels()) {
      check(kernel, src, 1, 9, 0.0);
    }
  }

  @Test
  void theScalarKernelIsChosenWhenSwitchedOffOrWithoutTheVectorModule() {
    assertInstanceOf(ShiftedCopy.Scalar.class, ShiftedCopy.Chosen.choose("off", true));
    assertInstanceOf(ShiftedCopy.Scalar.class, ShiftedCopy.Chosen.choose("auto", false));
    ShiftedCopy auto = ShiftedCopy.Chosen.choose("auto", true);
    // the suite's JVM has the module (the pom passes --add-modules); 4 or more double lanes on any x86-64 with AVX
    assertEquals(LaneShiftedCopy.lanes() >= 4, auto instanceof LaneShiftedCopy, auto.describe());
    assertEquals("scalar", new ShiftedCopy.Scalar().describe());
  }
}
