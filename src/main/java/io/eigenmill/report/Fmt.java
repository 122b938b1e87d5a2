package io.eigenmill.report;

import java.math.BigDecimal;
import java.math.MathContext;
import java.math.RoundingMode;
import java.time.Instant;
import java.time.ZoneOffset;
import java.time.format.DateTimeFormatter;
import java.util.Locale;

/**
 * Number formatting of the report: locale-independent (a dot for decimals, a comma between thousands), so that the
 * page reads the same on every machine. Formatting only; no value is derived here.
 */
public final class Fmt {
  /** Significant digits of report numbers: enough to compare runs by eye, few enough to read. */
  static final int DIGITS = 4;

  private static final DateTimeFormatter MINUTES =
      DateTimeFormatter.ofPattern("yyyy-MM-dd HH:mm", Locale.ROOT).withZone(ZoneOffset.UTC);
  private static final DateTimeFormatter DAYS =
      DateTimeFormatter.ofPattern("yyyy-MM-dd", Locale.ROOT).withZone(ZoneOffset.UTC);

  private Fmt() {}

  /** A count with thousands separators: 1234567 -> "1,234,567". */
  static String count(long n) {
    return String.format(Locale.ROOT, "%,d", n);
  }

  /** {@link #DIGITS} significant digits. */
  static String num(double x) {
    return num(x, DIGITS);
  }

  /**
   * {@code digits} significant digits, trailing zeros removed, thousands separators; scientific notation
   * ("1.235e-7") below 1e-3 and from 1e9 in magnitude. NaN is "n/a".
   */
  static String num(double x, int digits) {
    if (Double.isNaN(x)) {
      return "n/a";
    }
    if (Double.isInfinite(x)) {
      return x > 0 ? "∞" : "-∞";
    }
    if (x == 0) {
      return "0";
    }
    BigDecimal rounded = new BigDecimal(x).round(new MathContext(digits, RoundingMode.HALF_EVEN));
    double magnitude = Math.abs(rounded.doubleValue());
    if (magnitude < 1e-3 || magnitude >= 1e9) {
      return scientific(rounded);
    }
    BigDecimal plain = rounded.stripTrailingZeros();
    if (plain.scale() <= 0) {
      return String.format(Locale.ROOT, "%,d", plain.toBigIntegerExact());
    }
    String text = plain.toPlainString();
    int dot = text.indexOf('.');
    String whole = text.substring(0, dot);
    String grouped = whole.equals("-0") ? "-0"
        : String.format(Locale.ROOT, "%,d", new java.math.BigInteger(whole));
    return grouped + text.substring(dot);
  }

  private static String scientific(BigDecimal rounded) {
    BigDecimal stripped = rounded.stripTrailingZeros();
    int exponent = stripped.precision() - stripped.scale() - 1;
    BigDecimal mantissa = stripped.movePointLeft(exponent);
    return mantissa.toPlainString() + "e" + exponent;
  }

  /** A ratio as a percentage with {@code decimals} decimals: 0.42315 -> "42.32%". */
  static String percent(double ratio, int decimals) {
    if (Double.isNaN(ratio)) {
      return "n/a";
    }
    return String.format(Locale.ROOT, "%." + decimals + "f%%", ratio * 100);
  }

  /** A duration: "0.42 s", "12.3 s", "4 min 05 s", "2 h 03 min". */
  static String seconds(double s) {
    if (Double.isNaN(s)) {
      return "n/a";
    }
    if (s < 10) {
      return String.format(Locale.ROOT, "%.2f s", s);
    }
    if (s < 60) {
      return String.format(Locale.ROOT, "%.1f s", s);
    }
    long whole = Math.round(s);
    if (whole < 3600) {
      return String.format(Locale.ROOT, "%d min %02d s", whole / 60, whole % 60);
    }
    return String.format(Locale.ROOT, "%d h %02d min", whole / 3600, whole % 3600 / 60);
  }

  /** Seconds since the epoch as a UTC time; to the day when {@code dayOnly}. */
  public static String time(double epochSeconds, boolean dayOnly) {
    Instant t = Instant.ofEpochMilli(Math.round(epochSeconds * 1000));
    return (dayOnly ? DAYS : MINUTES).format(t);
  }

  /** A number with a fixed count of decimals (axis ticks, loadings in cells). */
  static String fixed(double x, int decimals) {
    String s = String.format(Locale.ROOT, "%." + Math.max(0, decimals) + "f", x);
    return s.matches("-0(\\.0*)?") ? s.substring(1) : s;
  }
}
