package io.eigenmill.bench;

import java.util.Locale;

/**
 * One ratio of the results, with its target when it has one.
 *
 * @param name what is divided by what, e.g. "fit-covariance / read-floor"
 * @param value the ratio of the medians (or of the wcss for the quality ratio)
 * @param target null when the ratio is informative only
 * @param inTurn when the two sides were timed in turn ({@link MainCases#PAIRS}), the ratio of each repetition pair
 *     (repetition i of one side over repetition i of the other, timed next to each other); empty otherwise
 */
public record Ratio(String name, double value, Target target, double[] inTurn) {

  public Ratio {
    inTurn = inTurn.clone();
  }

  public Ratio(String name, double value, Target target) {
    this(name, value, target, new double[0]);
  }

  /**
   * A bound on a ratio. {@code atMost}: met when value <= bound (our time over a floor); otherwise met when
   * value >= bound (the engine's time over ours). {@code quality} marks a quality ratio (wcss) rather than a
   * time ratio, which changes how a miss is described.
   */
  public record Target(boolean atMost, double bound, boolean quality) {

    public static Target atMost(double bound) {
      return new Target(true, bound, false);
    }

    public static Target atLeast(double bound) {
      return new Target(false, bound, false);
    }

    /** At most {@code bound}, for a ratio of quality measures (lower is better). */
    public static Target noWorseThan(double bound) {
      return new Target(true, bound, true);
    }

    public String describe() {
      return (atMost ? "<= " : ">= ") + Report.number(bound);
    }

    /** Whether {@code value} meets this bound. */
    public boolean met(double value) {
      // a wcss may differ from an equal one in the last bits: 1e-9 relative absorbs that
      double slack = quality ? 1e-9 : 0.0;
      return atMost ? value <= bound * (1 + slack) : value >= bound;
    }
  }

  public boolean met() {
    return target == null || target.met(value);
  }

  /** "met", or how far off: the factor by which our side must shrink (time), or how much higher it is (quality). */
  public String verdict() {
    if (target == null) {
      return "";
    }
    if (met()) {
      return "met";
    }
    double factor = target.atMost() ? value / target.bound() : target.bound() / value;
    if (target.quality()) {
      return String.format(Locale.ROOT, "missed: %.3g%% higher", (factor - 1) * 100);
    }
    return String.format(Locale.ROOT, "missed: needs %.2fx less time", factor);
  }
}
