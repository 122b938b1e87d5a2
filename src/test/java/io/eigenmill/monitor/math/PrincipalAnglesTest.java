package io.eigenmill.monitor.math;

import static org.junit.jupiter.api.Assertions.assertEquals;

import io.eigenmill.math.Linalg;
import io.eigenmill.pca.math.RandomizedSubspace;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * Principal angles against hand-built subspaces (definition of Bjorck and Golub 1973): a subspace with itself has
 * all angles zero; rotating one basis vector by theta in a plane orthogonal to the rest gives angles {0, theta}.
 * Tolerance 1e-12 rad: the sine-based small angles are accurate to a few eps (Knyazev and Argentati 2002).
 */
class PrincipalAnglesTest {

  @Test
  void subspaceWithItselfHasZeroAngles() {
    int d = 12;
    int k = 4;
    double[] q = RandomizedSubspace.start(d, k, 99);
    double[] angles = PrincipalAngles.between(q, k, q.clone(), k, d);
    for (double a : angles) {
      assertEquals(0.0, a, 1e-12);
    }
  }

  @Test
  void handBuiltRotationGivesItsAngle() {
    int d = 5;
    double theta = Math.toRadians(23.0);
    // A = [e1, e2]; B = [cos t e1 + sin t e3, e2]
    double[] a = new double[d * 2];
    a[0] = 1;
    a[d + 1] = 1;
    double[] b = new double[d * 2];
    b[0] = Math.cos(theta);
    b[2] = Math.sin(theta);
    b[d + 1] = 1;
    double[] angles = PrincipalAngles.between(a, 2, b, 2, d);
    assertEquals(0.0, angles[0], 1e-12);
    assertEquals(theta, angles[1], 1e-12);
  }

  @Test
  void tinyAnglesAreResolved() {
    // acos(cos t) cannot resolve t = 1e-9 (cos t = 1 - 5e-19 rounds to 1); the sine route must
    int d = 3;
    double theta = 1e-9;
    double[] a = {1, 0, 0};
    double[] b = {Math.cos(theta), Math.sin(theta), 0};
    assertEquals(theta, PrincipalAngles.between(a, 1, b, 1, d)[0], 1e-20);
  }

  @Test
  void anglesDoNotDependOnTheBasisChosen() {
    int d = 10;
    int k = 3;
    double[] q = RandomizedSubspace.start(d, k, 5);
    // mix the columns of q by a random invertible matrix and re-orthonormalise: same subspace
    SplittableRandom r = new SplittableRandom(6);
    double[] mix = new double[k * k];
    for (int i = 0; i < mix.length; i++) {
      mix[i] = r.nextDouble() - 0.5 + (i % (k + 1) == 0 ? 2 : 0);
    }
    double[] other = new double[d * k];
    Linalg.blas().dgemm("N", "N", d, k, k, 1.0, q, d, mix, k, 0.0, other, d);
    Linalg.orthonormalizeColumns(other, d, k);
    for (double a : PrincipalAngles.between(q, k, other, k, d)) {
      assertEquals(0.0, a, 1e-12);
    }
  }
}
