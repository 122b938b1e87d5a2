package io.eigenmill.bench;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.EnumSet;
import java.util.List;
import java.util.Set;

/**
 * The benchmark's command line, validated. Relative default paths resolve against {@code home} (the repository; the
 * script passes it), paths given on the command line against the working directory.
 *
 * @param rows rows of the main table (default 2,000,000; 20,000 with {@code --smoke})
 * @param features numeric features d (default 100; 20 with {@code --smoke}): the generator's base metrics, plus
 *     extra metrics when d is larger, or the first d base metrics when smaller
 * @param cores Spark's local[cores]
 * @param reps timed repetitions per case, after one untimed warm-up (1 and no warm-up with {@code --smoke})
 * @param cases the cases to run, in their fixed order
 * @param casesGiven true when {@code --cases} was given (scaling then runs exactly those)
 * @param windows only the windows case: a 7-day refit from moment snapshots against the data fit ({@link WindowRun})
 * @param groups only the groups cases: one model per group in one pass against one model and against separate
 *     filtered fits ({@link GroupRun})
 * @param longInput only the long-input case: the main table written long (one row per host, time, metric), our long
 *     fit against Spark's pivot followed by our wide fit, and a plain read of the long table ({@link LongRun}); the
 *     main table then has {@link #LONG_ROWS} rows unless {@code --rows} is given
 * @param command the command as typed, for the results file
 * @param tables only the table-input case: the covariance fit from an Iceberg copy of the main table against the
 *     fit from its Parquet folder ({@link TableRun})
 * @param groupsInTurn with {@code groups}: only the cases timed in turn (one model, 10 and 1,000 groups), without
 *     the separate filtered fits and the 10,000 groups, which run once each and take most of the run's time
 * @param process only the whole-process cases on the main table: child JVMs started, timed in turn and compared
 *     net of a JVM that only starts and stops Spark ({@link ProcessRun})
 */
public record BenchOptions(long rows, int features, int cores, int reps, Path data, List<BenchCase> cases,
    boolean casesGiven, boolean scaling, boolean wide, boolean windows, boolean groups, boolean longInput,
    boolean smoke, Path out, String command, boolean tables, boolean groupsInTurn, boolean process) {

  public static final long DEFAULT_ROWS = 2_000_000L;
  public static final int DEFAULT_FEATURES = 100;
  public static final long SMOKE_ROWS = 20_000L;
  /** Rows of the main table the long-input case writes long (times d = 100 metrics: 50 million long rows). */
  public static final long LONG_ROWS = 500_000L;
  public static final int SMOKE_FEATURES = 20;

  public static final String USAGE = String.join("\n",
      "usage: local-demo/bench [--rows N] [--features D] [--cores C] [--reps R] [--data DIR] [--cases LIST]",
      "                        [--scaling] [--wide] [--windows] [--groups] [--long] [--process] [--smoke]",
      "                        [--out FILE]",
      "  --rows N      rows of the main table (default 2000000)",
      "  --features D  numeric features (default 100)",
      "  --cores C     Spark local[C] (default 2)",
      "  --reps R      timed repetitions per case after one warm-up (default 3)",
      "  --data DIR    where generated tables are kept and reused (default local-demo/bench-data)",
      "  --cases LIST  comma-separated subset of: " + String.join(", ", BenchCase.words(List.of(BenchCase.values()))),
      "  --scaling     also run 0.5, 1, 2 and 4 million rows and fit seconds per million rows",
      "  --wide        only the wide cases: d = 1000 and 2000 by covariance, d = 20000 (10000 rows) and 5000",
      "                (100000 rows) by randomized, each timed in turn with the read floor of its table, with peak",
      "                heap and the largest single allocation (the script gives this run a 4 GiB heap)",
      "  --windows     only the windows case: 30 daily partitions x 10 slices (300,000 rows a day x 100 features),",
      "                a 7-day refit from moment snapshots against the data fit of the same rows, at 30,000, 90,000",
      "                and 300,000 rows a day (slice < 1, 3, 10); fit step and whole job",
      "  --groups      only the groups cases on the main table copied with group columns g10, g1000, g10000: one",
      "                model against reduce.group-by with 10 and 1,000 groups, 10 separate filtered fits (input.where),",
      "                and 10,000 groups once with its peak heap; fit step and whole job",
      "  --groups-in-turn  the groups cases timed in turn only (one model, 10 and 1,000 groups)",
      "  --long        only the long-input case: the main table at 500000 rows (unless --rows) written long, one",
      "                row per (host, ts, metric, value), 50 million rows at d = 100; our long fit (input.layout =",
      "                long, 5-minute buckets, mean) against Spark's groupBy(host, bucket).pivot(metric, names)",
      "                .agg(avg(value)) followed by our wide fit, and a plain read of the long table",
      "  --tables      only the table-input case: the main table copied once into an Iceberg table (Hadoop",
      "                catalog under --data), the covariance fit from the table against the fit from the folder",
      "  --process     only whole processes on the main table, each a child JVM with the command line's heap",
      "                (EIGENMILL_DRIVER_MEMORY, default 4g), timed in turn (no warm-up: every process starts",
      "                cold): start-only (the command line's Spark session opened and stopped), read-only (the",
      "                read floor), fit (the command line's run of a covariance job), builtin-pca on the table and",
      "                on a copy without missing values and with the features only; times net of start-only, the",
      "                fit's fixed cost (net time less its passes) and its stage timings from summary.json",
      "  --smoke       tiny table (20000 x 20 unless given), 1 repetition, no warm-up",
      "  --out FILE    results as markdown (default local-demo/BENCHMARKS.md); only this run's sections are replaced");

  /** Untimed warm-up runs before the timed ones. */
  public int warmups() {
    return smoke ? 0 : 1;
  }

  /** Timed runs per case. */
  public int repetitions() {
    return smoke ? 1 : reps;
  }

  public static BenchOptions parse(String[] args, Path home) {
    Long rows = null;
    Integer features = null;
    int cores = 2;
    int reps = 3;
    Path data = home.resolve("local-demo/bench-data");
    Path out = home.resolve("local-demo/BENCHMARKS.md");
    Set<BenchCase> cases = EnumSet.allOf(BenchCase.class);
    boolean casesGiven = false;
    boolean scaling = false;
    boolean wide = false;
    boolean windows = false;
    boolean groups = false;
    boolean groupsInTurn = false;
    boolean longInput = false;
    boolean smoke = false;
    boolean tables = false;
    boolean process = false;
    for (int i = 0; i < args.length; i++) {
      String a = args[i];
      switch (a) {
        case "--rows" -> rows = positiveLong(a, value(args, ++i, a));
        case "--features" -> features = (int) positiveLong(a, value(args, ++i, a));
        case "--cores" -> cores = (int) positiveLong(a, value(args, ++i, a));
        case "--reps" -> reps = (int) positiveLong(a, value(args, ++i, a));
        case "--data" -> data = Path.of(value(args, ++i, a)).toAbsolutePath();
        case "--out" -> out = Path.of(value(args, ++i, a)).toAbsolutePath();
        case "--cases" -> {
          cases = casesOf(value(args, ++i, a));
          casesGiven = true;
        }
        case "--scaling" -> scaling = true;
        case "--wide" -> wide = true;
        case "--windows" -> windows = true;
        case "--groups" -> groups = true;
        case "--groups-in-turn" -> {
          groups = true;
          groupsInTurn = true;
        }
        case "--long" -> longInput = true;
        case "--smoke" -> smoke = true;
        case "--tables" -> tables = true;
        case "--process" -> process = true;
        default -> throw new IllegalArgumentException("unknown argument '" + a + "'");
      }
    }
    if (process && (groups || windows || wide || longInput || tables || scaling || casesGiven)) {
      throw new IllegalArgumentException("--process runs only its own cases: drop --groups, --windows, --wide, "
          + "--long, --tables, --scaling and --cases");
    }
    if (wide && scaling) {
      throw new IllegalArgumentException("--wide runs on its own (it needs its own 4 GiB JVM): drop --scaling");
    }
    if (windows && (wide || scaling || casesGiven)) {
      throw new IllegalArgumentException("--windows runs only its own case: drop --wide, --scaling and --cases");
    }
    if (groups && (windows || wide || scaling || casesGiven)) {
      throw new IllegalArgumentException("--groups runs only its own cases: drop --windows, --wide, --scaling and "
          + "--cases");
    }
    if (longInput && (groups || windows || wide || scaling || casesGiven)) {
      throw new IllegalArgumentException("--long runs only its own case: drop --groups, --windows, --wide, "
          + "--scaling and --cases");
    }
    long n = rows != null ? rows : smoke ? SMOKE_ROWS : longInput ? LONG_ROWS : DEFAULT_ROWS;
    int d = features != null ? features : smoke ? SMOKE_FEATURES : DEFAULT_FEATURES;
    if (d < 11) {
      throw new IllegalArgumentException("--features " + d + ": at least 11 (the fits keep k = 10 components)");
    }
    return new BenchOptions(n, d, cores, reps, data, new ArrayList<>(cases), casesGiven, scaling, wide, windows,
        groups, longInput, smoke, out, command(args), tables, groupsInTurn, process);
  }

  private static Set<BenchCase> casesOf(String list) {
    Set<BenchCase> out = EnumSet.noneOf(BenchCase.class);
    for (String word : list.split(",")) {
      if (!word.isBlank()) {
        out.add(BenchCase.of(word));
      }
    }
    if (out.isEmpty()) {
      throw new IllegalArgumentException("--cases: empty list");
    }
    return out;
  }

  private static String value(String[] args, int i, String flag) {
    if (i >= args.length) {
      throw new IllegalArgumentException(flag + " needs a value");
    }
    return args[i];
  }

  private static long positiveLong(String flag, String text) {
    long v;
    try {
      v = Long.parseLong(text.replace("_", "").replace(",", ""));
    } catch (NumberFormatException e) {
      throw new IllegalArgumentException(flag + " " + text + ": not a whole number");
    }
    if (v <= 0 || (!flag.equals("--rows") && v > Integer.MAX_VALUE)) {
      throw new IllegalArgumentException(flag + " " + text + ": must be a positive whole number");
    }
    return v;
  }

  private static String command(String[] args) {
    StringBuilder s = new StringBuilder("local-demo/bench");
    for (String a : args) {
      boolean plain = a.matches("[A-Za-z0-9_./,:=+-]+");
      s.append(' ').append(plain ? a : "'" + a.replace("'", "'\\''") + "'");
    }
    return s.toString();
  }
}
