package io.eigenmill.demo;

import io.eigenmill.demo.FleetTelemetryGenerator.FleetSpec;
import io.eigenmill.demo.FleetTelemetryGenerator.Layout;
import java.math.BigDecimal;
import java.util.List;
import java.util.Locale;
import org.apache.spark.sql.SparkSession;

/**
 * The generator's command-line flags, parsed and checked. Every flag takes a value, as {@code --flag VALUE} or
 * {@code --flag=VALUE}. Counts accept digits with optional {@code _} or {@code ,} separators, a decimal exponent
 * ({@code 2e6}) and a k / m / b suffix ({@code 2m}, {@code 1.5k}); the result must be a whole number. Errors name the
 * flag and the value. {@code --layout long} writes the long layout (see {@link FleetTelemetryGenerator}; the metrics
 * renamed there are listed in {@link #USAGE}).
 */
record GeneratorArguments(String out, FleetSpec spec, String master, Layout layout) {
  static final List<String> FLAGS = List.of("--out", "--rows", "--seed", "--extra-metrics", "--partitions",
      "--start-date", "--hosts", "--layout", "--master");
  static final int MAX_PARTITIONS = 1_000_000;
  static final String USAGE = "usage: FleetTelemetryGenerator --out PATH [--rows N] [--seed S] [--extra-metrics M]"
      + " [--partitions P] [--start-date yyyy-MM-dd] [--hosts H] [--layout wide|long] [--master M]\n"
      + "  N, M, P accept 2000000, 2_000_000, 2e6 or 2m; defaults: rows 120000, seed 20261201, extra-metrics 0,"
      + " partitions 8, layout wide, master local[*]; hosts: round(sqrt(0.48 N)) unless given (then N / (288 H) is"
      + " the number of days)\n"
      + "  --layout long: the same rows melted to (host, region, ts, metric, value), one row per sample, date"
      + " partitions; sample times jittered inside each 5-minute interval, 1 % of samples and every sensor dropout"
      + " absent; cache_hit_ratio, http_ttfb_p99_ms and fan_4_rpm are named cache.hit-ratio, http.ttfb-p99-ms and"
      + " fan-4.rpm";

  static GeneratorArguments parse(String[] args) {
    FleetSpec spec = FleetSpec.defaults();
    String out = null;
    String master = null;
    Layout layout = Layout.WIDE;
    for (int i = 0; i < args.length; i++) {
      String flag = args[i];
      String value = null;
      int eq = flag.indexOf('=');
      if (flag.startsWith("--") && eq > 0) {
        value = flag.substring(eq + 1);
        flag = flag.substring(0, eq);
      }
      if (!FLAGS.contains(flag)) {
        throw new IllegalArgumentException("unknown flag " + args[i] + " (expected one of " + FLAGS + ")");
      }
      if (value == null) {
        if (i + 1 >= args.length) {
          throw new IllegalArgumentException(flag + " needs a value");
        }
        value = args[++i];
      }
      switch (flag) {
        case "--out" -> out = requireText(flag, value);
        case "--rows" -> spec = spec.withRows(count(flag, value, 1, Long.MAX_VALUE));
        case "--seed" -> spec = spec.withSeed(seed(flag, value));
        case "--extra-metrics" -> spec = spec.withExtraMetrics(
            (int) count(flag, value, 0, FleetSpec.MAX_EXTRA_METRICS));
        case "--partitions" -> spec = spec.withPartitions((int) count(flag, value, 1, MAX_PARTITIONS));
        case "--start-date" -> spec = spec.withStartDate(requireText(flag, value));
        case "--hosts" -> spec = spec.withHosts((int) count(flag, value, 1, FleetSpec.MAX_HOSTS));
        case "--layout" -> layout = layout(flag, value);
        default -> master = requireText(flag, value);
      }
    }
    if (out == null) {
      throw new IllegalArgumentException("--out is required: the folder to write the Parquet table to");
    }
    return new GeneratorArguments(out, spec, master, layout);
  }

  /**
   * A local session on loopback with the UI off, or, when no {@code --master} was given and a master comes from
   * spark-submit, that master. Session time zone UTC so that {@code ts} and {@code date} read alike.
   */
  SparkSession session() {
    String m = master != null ? master : System.getProperty("spark.master", "local[*]");
    SparkSession.Builder b = SparkSession.builder().appName("eigenmill demo data").master(m)
        .config("spark.ui.enabled", "false")
        .config("spark.sql.session.timeZone", "UTC");
    if (m.startsWith("local")) {
      b = b.config("spark.driver.host", "127.0.0.1").config("spark.driver.bindAddress", "127.0.0.1");
    }
    SparkSession spark = b.getOrCreate();
    spark.sparkContext().setLogLevel("WARN"); // the one line this tool prints should not drown in progress logs
    return spark;
  }

  /** A whole number in [min, max], written as described in the class comment. */
  static long count(String flag, String text, long min, long max) {
    String t = text.trim().replace("_", "").replace(",", "").toLowerCase(Locale.ROOT);
    long multiplier = 1;
    char last = t.isEmpty() ? ' ' : t.charAt(t.length() - 1);
    if (last == 'k' || last == 'm' || last == 'b') {
      multiplier = last == 'k' ? 1_000L : last == 'm' ? 1_000_000L : 1_000_000_000L;
      t = t.substring(0, t.length() - 1);
    }
    BigDecimal v;
    try {
      v = new BigDecimal(t).multiply(BigDecimal.valueOf(multiplier));
    } catch (NumberFormatException e) {
      throw new IllegalArgumentException(flag + " " + text + ": not a count (write e.g. 2000000, 2_000_000, 2e6"
          + " or 2m)");
    }
    if (v.signum() != 0 && v.stripTrailingZeros().scale() > 0) {
      throw new IllegalArgumentException(flag + " " + text + ": not a whole number (" + v.toPlainString() + ")");
    }
    if (v.compareTo(BigDecimal.valueOf(min)) < 0 || v.compareTo(BigDecimal.valueOf(max)) > 0) {
      throw new IllegalArgumentException(flag + " " + text + ": must be between " + min + " and " + max);
    }
    return v.longValueExact();
  }

  private static long seed(String flag, String text) {
    try {
      return Long.parseLong(text.trim().replace("_", ""));
    } catch (NumberFormatException e) {
      throw new IllegalArgumentException(flag + " " + text + ": not a whole number that fits in 64 bits");
    }
  }

  private static Layout layout(String flag, String text) {
    try {
      return Layout.parse(text);
    } catch (IllegalArgumentException e) {
      throw new IllegalArgumentException(flag + " " + text + ": must be wide or long");
    }
  }

  private static String requireText(String flag, String value) {
    if (value.isBlank()) {
      throw new IllegalArgumentException(flag + " needs a non-empty value");
    }
    return value;
  }
}
