package io.eigenmill.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/**
 * The colours stay apart for readers with colour-vision deficiencies. Deficiencies are simulated with the
 * full-severity matrices of Machado, Oliveira and Fernandes (2009), applied in linear RGB; distances are CIE76
 * Delta E in CIELAB (D65). A Delta E of about 10 is clearly distinct side by side on a chart.
 */
class PaletteTest {
  private static final double[][] NORMAL = {{1, 0, 0}, {0, 1, 0}, {0, 0, 1}};
  private static final double[][] PROTAN = {{0.152286, 1.052583, -0.204868}, {0.114503, 0.786281, 0.099216},
      {-0.003882, -0.048116, 1.051998}};
  private static final double[][] DEUTAN = {{0.367322, 0.860646, -0.227968}, {0.280085, 0.672501, 0.047413},
      {-0.011820, 0.042940, 0.968881}};
  private static final double[][] TRITAN = {{1.255528, -0.076749, -0.178779}, {-0.078411, 0.930809, 0.147602},
      {0.004733, 0.691367, 0.303900}};

  @Test
  void categoricalColoursStayDistinctUnderSimulatedDeficiencies() {
    double[][][] visions = {NORMAL, PROTAN, DEUTAN, TRITAN};
    String[] names = {"normal", "protanopia", "deuteranopia", "tritanopia"};
    for (int v = 0; v < visions.length; v++) {
      for (int a = 0; a < Palette.CATEGORICAL.size(); a++) {
        for (int b = a + 1; b < Palette.CATEGORICAL.size(); b++) {
          String ca = Palette.CATEGORICAL.get(a);
          String cb = Palette.CATEGORICAL.get(b);
          double e = deltaE(lab(ca, visions[v]), lab(cb, visions[v]));
          assertTrue(e >= 12, names[v] + ": " + ca + " and " + cb + " differ by Delta E " + e + " < 12");
        }
      }
    }
  }

  @Test
  void divergingScaleIsCentredNeutralAndDarkensTowardsBothEnds() {
    assertEquals(Palette.DIVERGING.get(2), Palette.diverging(0));
    assertEquals(Palette.DIVERGING.get(0), Palette.diverging(-1));
    assertEquals(Palette.DIVERGING.get(4), Palette.diverging(1));
    assertEquals(Palette.DIVERGING.get(4), Palette.diverging(7), "clamped");
    double previousNeg = lab(Palette.diverging(0), NORMAL)[0];
    double previousPos = previousNeg;
    for (int i = 1; i <= 10; i++) {
      double t = i / 10.0;
      double neg = lab(Palette.diverging(-t), NORMAL)[0];
      double pos = lab(Palette.diverging(t), NORMAL)[0];
      assertTrue(neg < previousNeg && pos < previousPos, "lightness falls away from zero at t = " + t);
      assertTrue(Math.abs(neg - pos) < 15, "both sides darken alike at t = " + t + ": " + neg + " vs " + pos);
      previousNeg = neg;
      previousPos = pos;
    }
  }

  @Test
  void divergingEndsStayApartUnderSimulatedDeficiencies() {
    for (double[][] vision : new double[][][] {NORMAL, PROTAN, DEUTAN, TRITAN}) {
      for (double t : new double[] {0.4, 0.8, 1.0}) {
        double e = deltaE(lab(Palette.diverging(-t), vision), lab(Palette.diverging(t), vision));
        assertTrue(e > 20, "-" + t + " and +" + t + " differ by Delta E " + e);
      }
    }
  }

  @Test
  void cellTextContrastsWithItsCell() {
    assertEquals("#ffffff", Palette.textOn(Palette.diverging(1)));
    assertEquals("#ffffff", Palette.textOn(Palette.diverging(-1)));
    assertEquals(Palette.INK, Palette.textOn(Palette.diverging(0)));
  }

  static double[] lab(String hex, double[][] vision) {
    int[] c = Palette.rgb(hex);
    double[] lin = {Palette.linear(c[0]), Palette.linear(c[1]), Palette.linear(c[2])};
    double[] s = new double[3];
    for (int i = 0; i < 3; i++) {
      for (int j = 0; j < 3; j++) {
        s[i] += vision[i][j] * lin[j];
      }
      s[i] = Math.max(0, Math.min(1, s[i]));
    }
    double x = (0.4124 * s[0] + 0.3576 * s[1] + 0.1805 * s[2]) / 0.95047;
    double y = 0.2126 * s[0] + 0.7152 * s[1] + 0.0722 * s[2];
    double z = (0.0193 * s[0] + 0.1192 * s[1] + 0.9505 * s[2]) / 1.08883;
    return new double[] {116 * f(y) - 16, 500 * (f(x) - f(y)), 200 * (f(y) - f(z))};
  }

  private static double f(double t) {
    return t > 216.0 / 24389 ? Math.cbrt(t) : (24389.0 / 27 * t + 16) / 116;
  }

  private static double deltaE(double[] a, double[] b) {
    return Math.sqrt(Math.pow(a[0] - b[0], 2) + Math.pow(a[1] - b[1], 2) + Math.pow(a[2] - b[2], 2));
  }
}
