package io.eigenmill.demo;

import io.eigenmill.engine.SessionSettings;
import io.eigenmill.engine.SparkLine;
import io.eigenmill.io.WriterSession;
import java.io.PrintStream;
import java.time.LocalDate;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.apache.spark.SparkContext;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.rdd.RDD;
import org.apache.spark.sql.DataFrameWriter;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RuntimeConfig;
import org.apache.spark.sql.SaveMode;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;

/**
 * The demo data: an invented telemetry table of a fleet of edge cache servers in five regions, one row per host per
 * 5-minute interval, generated deterministically from a seed.
 *
 * <p>Columns: the keys {@code host}, {@code region}, {@code workload}, {@code ts} (UTC instants, 5-minute steps from
 * midnight UTC of the start date), {@code date} (the UTC day, yyyy-MM-dd, the partition column when written) and
 * {@code fault} (null on healthy rows, else the injected fault's name: a label, never a feature); then 62 metrics
 * (doubles, plus {@code open_files}, {@code tcp_syn_backlog}, {@code worker_threads_busy} as int,
 * {@code tcp_connections} as long and {@code cpu_freq_ghz} as float); then {@code extraMetrics} doubles
 * {@code x_0001 ..}. See {@link TelemetryModel} for the latent factors, faults and missing cells.
 *
 * <p>Size: {@link #hostsFor} hosts (240 for the default 120,000 rows) unless a host count is given, ceil(rows / hosts)
 * intervals (288 a day), cut to exactly {@code rows}. Determinism: row r is host r % hosts at interval r / hosts, a
 * pure function of (seed, host, interval), so the same spec gives the same rows for any partition count or core
 * count.
 *
 * <p>Long layout ({@link Layout#LONG}, {@link #generateLong}): the same fleet melted to one row per sample, as a
 * telemetry export would deliver it, with the columns {@code host}, {@code region}, {@code ts} (the sample time),
 * {@code metric} (the metric's name), {@code value} (double) and {@code date}. The same seed gives the same
 * underlying values as the wide table; the melt adds, deterministically from (seed, host, interval, metric):
 * <ul>
 *   <li>irregular sample times: the wide row's interval start plus a jitter of 0 to 299.999 s (whole
 *       milliseconds), so flooring {@code ts} to 5 minutes gives back one cell per (host, interval, metric);</li>
 *   <li>absent samples: a share of {@value #LONG_ABSENT_SHARE} (1 %) at random, and every null cell of the wide table (the
 *       sensor dropouts); a NaN reading stays a NaN value;</li>
 *   <li>metric names that are not column names: {@code cache_hit_ratio} is {@code cache.hit-ratio},
 *       {@code http_ttfb_p99_ms} is {@code http.ttfb-p99-ms} and {@code fan_4_rpm} (a sensor that drops out) is
 *       {@code fan-4.rpm} ({@link #LONG_NAMES}); every other metric, extra metrics included, keeps its wide column
 *       name. Replacing the dots and dashes by underscores gives back the wide names.</li>
 * </ul>
 * Int, long and float metrics become the double of their stored value. The {@code workload} and {@code fault} labels
 * are not in the long table.
 *
 * <p>Cost: one pass, O(rows x columns), no shuffle; writing sorts each task's rows by date (Spark's partitioned
 * writer), which costs memory of one task's rows (in the long layout, about 62 small rows per wide row). Measured
 * speeds are in the package notes ({@code package-info}).
 */
public final class FleetTelemetryGenerator {
  /** Key and label columns, in order, before the metrics. */
  public static final List<String> KEY_COLUMNS = List.of("host", "region", "workload", "ts", "date", "fault");

  /** Above this many columns, {@link #write} uses interpreted projections. */
  public static final int WIDE_COLUMNS = 1000;

  /** The long layout's columns, in order. */
  public static final List<String> LONG_COLUMNS = List.of("host", "region", "ts", "metric", "value", "date");

  /**
   * The metrics named differently in the long layout: wide column name to long name, in metric order. The long
   * names are not valid column names (dots and dashes); replacing those by underscores gives back the wide name.
   */
  public static final Map<String, String> LONG_NAMES = longNames();

  /** The share of samples left out of the long layout at random, besides the wide table's null cells. */
  public static final double LONG_ABSENT_SHARE = 0.01;

  private static final List<String> DICTIONARY_COLUMNS = List.of("host", "region", "workload", "fault");
  private static final List<String> LONG_DICTIONARY_COLUMNS = List.of("host", "region", "metric");
  private static final String CODEGEN_FACTORY_MODE = "spark.sql.codegen.factoryMode";

  private FleetTelemetryGenerator() {}

  /** How the table is laid out: one row per host and interval, or one row per sample. */
  public enum Layout {
    /** One row per host per interval, one column per metric (the default). */
    WIDE,
    /** One row per (host, sample time, metric), see the class comment. */
    LONG;

    /** {@code wide} or {@code long}, any case. */
    public static Layout parse(String text) {
      for (Layout l : values()) {
        if (l.name().equalsIgnoreCase(text.trim())) {
          return l;
        }
      }
      throw new IllegalArgumentException("not a layout: " + text + " (expected wide or long)");
    }

    @Override
    public String toString() {
      return name().toLowerCase(java.util.Locale.ROOT);
    }
  }

  private static Map<String, String> longNames() {
    Map<String, String> names = new LinkedHashMap<>();
    names.put(Metric.HIT_RATIO.column, "cache.hit-ratio");
    names.put(Metric.TTFB_P99.column, "http.ttfb-p99-ms");
    names.put(Metric.FAN_4.column, "fan-4.rpm");
    return java.util.Collections.unmodifiableMap(names);
  }

  /**
   * What to generate.
   *
   * @param rows exact row count, at least 1
   * @param seed the seed every random value derives from
   * @param extraMetrics extra double columns {@code x_0001 ..}, 0 to {@value #MAX_EXTRA_METRICS}
   * @param partitions Spark partitions of the generated Dataset, at least 1; when written, each writes one file per
   *     day it covers
   * @param startDate the first day, yyyy-MM-dd; the first row is at its midnight UTC
   * @param fixedHosts the number of hosts, 1 to min(rows, 100,000); 0: {@link #hostsFor}(rows). With a fixed fleet
   *     the row count sets the time span: {@code rows = hosts x 288} is one day of 5-minute intervals per 288 rows
   *     per host
   */
  public record FleetSpec(long rows, long seed, int extraMetrics, int partitions, String startDate, int fixedHosts) {
    public static final int MAX_EXTRA_METRICS = 100_000;
    public static final int MAX_HOSTS = 100_000;

    /** A spec whose host count follows from the rows ({@link #hostsFor}). */
    public FleetSpec(long rows, long seed, int extraMetrics, int partitions, String startDate) {
      this(rows, seed, extraMetrics, partitions, startDate, 0);
    }

    public FleetSpec {
      List<String> problems = new ArrayList<>();
      if (rows < 1) {
        problems.add("rows = " + rows + ": must be at least 1");
      }
      if (extraMetrics < 0 || extraMetrics > MAX_EXTRA_METRICS) {
        problems.add("extraMetrics = " + extraMetrics + ": must be between 0 and " + MAX_EXTRA_METRICS);
      }
      if (partitions < 1) {
        problems.add("partitions = " + partitions + ": must be at least 1");
      }
      if (fixedHosts < 0 || fixedHosts > MAX_HOSTS || (fixedHosts > 0 && fixedHosts > rows)) {
        problems.add("hosts = " + fixedHosts + ": must be between 1 and min(rows, " + MAX_HOSTS + ") (0: from the"
            + " rows)");
      }
      try {
        LocalDate.parse(String.valueOf(startDate));
      } catch (DateTimeParseException e) {
        problems.add("startDate = " + startDate + ": must be a date written yyyy-MM-dd");
      }
      if (!problems.isEmpty()) {
        throw new IllegalArgumentException(String.join("; ", problems));
      }
    }

    /** 120,000 rows (240 hosts over 500 intervals), seed 20261201, no extra metrics, 8 partitions, 2026-11-02. */
    public static FleetSpec defaults() {
      return new FleetSpec(120_000, 20261201L, 0, 8, "2026-11-02");
    }

    public FleetSpec withRows(long newRows) {
      return new FleetSpec(newRows, seed, extraMetrics, partitions, startDate, fixedHosts);
    }

    public FleetSpec withSeed(long newSeed) {
      return new FleetSpec(rows, newSeed, extraMetrics, partitions, startDate, fixedHosts);
    }

    public FleetSpec withExtraMetrics(int newExtraMetrics) {
      return new FleetSpec(rows, seed, newExtraMetrics, partitions, startDate, fixedHosts);
    }

    public FleetSpec withPartitions(int newPartitions) {
      return new FleetSpec(rows, seed, extraMetrics, newPartitions, startDate, fixedHosts);
    }

    public FleetSpec withStartDate(String newStartDate) {
      return new FleetSpec(rows, seed, extraMetrics, partitions, newStartDate, fixedHosts);
    }

    public FleetSpec withHosts(int newHosts) {
      return new FleetSpec(rows, seed, extraMetrics, partitions, startDate, newHosts);
    }

    /** {@code fixedHosts}, or {@link #hostsFor}(rows) when it is 0. */
    public int hosts() {
      return fixedHosts > 0 ? fixedHosts : hostsFor(rows);
    }

    /** ceil(rows / hosts). */
    public long intervals() {
      int h = hosts();
      return (rows + h - 1) / h;
    }

    public int columns() {
      return KEY_COLUMNS.size() + Metric.COUNT + extraMetrics;
    }
  }

  /**
   * The host count for a size: round(sqrt(0.48 rows)), so the fleet and the time span grow together (240 hosts over
   * 500 intervals for 120,000 rows; 980 over 2,041 for 2,000,000), at least 12 (fewer only when rows < 12), at most
   * 100,000.
   */
  public static int hostsFor(long rows) {
    long h = Math.round(Math.sqrt(0.48 * rows));
    return (int) Math.max(1, Math.min(rows, Math.min(100_000, Math.max(12, h))));
  }

  /** The table's schema: keys, base metrics, then the extra metrics. */
  public static StructType schema(int extraMetrics) {
    List<StructField> fields = new ArrayList<>();
    fields.add(DataTypes.createStructField("host", DataTypes.StringType, false));
    fields.add(DataTypes.createStructField("region", DataTypes.StringType, false));
    fields.add(DataTypes.createStructField("workload", DataTypes.StringType, false));
    fields.add(DataTypes.createStructField("ts", DataTypes.TimestampType, false));
    fields.add(DataTypes.createStructField("date", DataTypes.StringType, false));
    fields.add(DataTypes.createStructField("fault", DataTypes.StringType, true));
    for (Metric m : Metric.ALL) {
      fields.add(DataTypes.createStructField(m.column, sparkType(m.kind), m.dropsOut));
    }
    for (int j = 0; j < extraMetrics; j++) {
      fields.add(DataTypes.createStructField(ExtraMetrics.name(j, extraMetrics), DataTypes.DoubleType, false));
    }
    return DataTypes.createStructType(fields);
  }

  private static DataType sparkType(Metric.Kind kind) {
    return switch (kind) {
      case DOUBLE -> DataTypes.DoubleType;
      case FLOAT -> DataTypes.FloatType;
      case INT -> DataTypes.IntegerType;
      case LONG -> DataTypes.LongType;
    };
  }

  /** The numeric columns (base metrics, then extra metrics): the features of a fit on this table. */
  public static List<String> metricColumns(int extraMetrics) {
    List<String> names = new ArrayList<>(Metric.COUNT + extraMetrics);
    for (Metric m : Metric.ALL) {
      names.add(m.column);
    }
    for (int j = 0; j < extraMetrics; j++) {
      names.add(ExtraMetrics.name(j, extraMetrics));
    }
    return names;
  }

  /**
   * The values of the long layout's {@code metric} column, in the order of {@link #metricColumns}: each wide column
   * name, or its long name ({@link #LONG_NAMES}).
   */
  public static List<String> longMetricNames(int extraMetrics) {
    List<String> names = metricColumns(extraMetrics);
    names.replaceAll(n -> LONG_NAMES.getOrDefault(n, n));
    return names;
  }

  /** The long layout's schema: {@link #LONG_COLUMNS}, the metric's value as a double. */
  public static StructType longSchema() {
    return DataTypes.createStructType(List.of(
        DataTypes.createStructField("host", DataTypes.StringType, false),
        DataTypes.createStructField("region", DataTypes.StringType, false),
        DataTypes.createStructField("ts", DataTypes.TimestampType, false),
        DataTypes.createStructField("metric", DataTypes.StringType, false),
        DataTypes.createStructField("value", DataTypes.DoubleType, false),
        DataTypes.createStructField("date", DataTypes.StringType, false)));
  }

  /** The unit of each base metric, by column name, in column order (for the report's axes and tables). */
  public static Map<String, String> metricUnits() {
    Map<String, String> units = new LinkedHashMap<>();
    for (Metric m : Metric.ALL) {
      units.put(m.column, m.unit);
    }
    return units;
  }

  /** The names of the injected faults, as they appear in the {@code fault} column. */
  public static List<String> faultNames() {
    List<String> names = new ArrayList<>();
    for (Fault f : Fault.ALL) {
      names.add(f.label);
    }
    return names;
  }

  /**
   * The table, lazily: row ids {@code 0 .. rows-1} from {@code SparkContext.range} in {@code partitions} slices,
   * mapped partition by partition ({@link TelemetryRows}) to binary rows of {@link #schema}. Nothing runs until an
   * action. For tables of more than {@value #WIDE_COLUMNS} columns, prefer {@link #write}: Spark generates and
   * compiles code per column for the projections of any plan, which {@code write} avoids.
   */
  public static Dataset<Row> generate(SparkSession spark, FleetSpec spec) {
    StructType schema = schema(spec.extraMetrics());
    TelemetryRows rows = new TelemetryRows(spec.seed(), spec.hosts(), spec.intervals(), spec.extraMetrics(),
        spec.startDate());
    RDD<Object> ids = spark.sparkContext().range(0, spec.rows(), 1, spec.partitions());
    JavaRDD<InternalRow> table = ids.toJavaRDD().mapPartitions(rows);
    return SparkLine.fromInternalRows(spark, table.rdd(), schema);
  }

  /**
   * The long layout of the table of {@code spec}, lazily: the wide table's row ids in {@code partitions} slices, each
   * wide row melted to its present samples ({@link LongTelemetryRows}), binary rows of {@link #longSchema}. About
   * {@code rows x (62 + extraMetrics) x 0.99} rows.
   */
  public static Dataset<Row> generateLong(SparkSession spark, FleetSpec spec) {
    LongTelemetryRows samples = new LongTelemetryRows(spec.seed(), spec.hosts(), spec.intervals(),
        spec.extraMetrics(), spec.startDate());
    RDD<Object> ids = spark.sparkContext().range(0, spec.rows(), 1, spec.partitions());
    JavaRDD<InternalRow> table = ids.toJavaRDD().mapPartitions(samples);
    return SparkLine.fromInternalRows(spark, table.rdd(), longSchema());
  }

  /** {@link #write(SparkSession, FleetSpec, Layout, String)} of the wide layout. */
  public static void write(SparkSession caller, FleetSpec spec, String path) {
    write(caller, spec, Layout.WIDE, path);
  }

  /**
   * Generates the table and writes it as Parquet under {@code path}, partitioned by {@code date}, replacing what was
   * there. One Spark job; each task sorts its rows by date before writing (Spark's partitioned writer), which holds
   * one task's rows in execution memory (or spills).
   *
   * <p>The metric columns are written without dictionary encoding (they are continuous: trying a dictionary per
   * column chunk took half the CPU time of the write, for nothing); the key columns keep it. Above
   * {@value #WIDE_COLUMNS} columns the write runs with Spark's interpreted projections
   * ({@code spark.sql.codegen.factoryMode = NO_CODEGEN}, restored afterwards): compiling a projection of 20,000
   * columns cost minutes per task, interpreting it costs microseconds per row.
   *
   * <p>The long layout ({@link #generateLong}) is written the same way, partitioned by {@code date}, with
   * dictionaries for {@code host}, {@code region} and {@code metric} only; it has six columns whatever the metrics.
   */
  public static void write(SparkSession caller, FleetSpec spec, Layout layout, String path) {
    // timestamps as Parquet TIMESTAMP (micros, UTC-adjusted), like every eigenmill table; the caller's session keeps
    // its own setting
    SparkSession spark = WriterSession.of(caller, Map.of());
    SparkContext sc = spark.sparkContext();
    String description = sc.getLocalProperty("spark.job.description");
    RuntimeConfig conf = spark.conf();
    boolean longLayout = layout == Layout.LONG;
    boolean wide = !longLayout && spec.columns() > WIDE_COLUMNS;
    sc.setJobDescription("eigenmill demo: " + spec.rows() + " fleet telemetry rows x " + spec.columns()
        + " columns" + (longLayout ? ", melted to long," : "") + " to " + path);
    try {
      SessionSettings.with(conf, wide ? Map.of(CODEGEN_FACTORY_MODE, "NO_CODEGEN") : Map.of(), () -> {
        Dataset<Row> table = longLayout ? generateLong(spark, spec) : generate(spark, spec);
        DataFrameWriter<Row> writer = table.write().mode(SaveMode.Overwrite).partitionBy("date")
            .option("parquet.enable.dictionary", "false");
        for (String key : longLayout ? LONG_DICTIONARY_COLUMNS : DICTIONARY_COLUMNS) {
          writer = writer.option("parquet.enable.dictionary#" + key, "true");
        }
        writer.parquet(path);
        return null;
      });
    } finally {
      sc.setJobDescription(description);
    }
  }

  /** Command line; see {@link GeneratorArguments#USAGE}. Exit 0 when written, 2 on a bad flag, 1 on failure. */
  public static void main(String[] args) {
    System.exit(run(args, System.out, System.err));
  }

  /** The command line without {@code System.exit}: returns the exit code. */
  static int run(String[] args, PrintStream out, PrintStream err) {
    GeneratorArguments a;
    try {
      a = GeneratorArguments.parse(args);
    } catch (IllegalArgumentException e) {
      err.println("fleet-telemetry: " + e.getMessage());
      err.println(GeneratorArguments.USAGE);
      return 2;
    }
    SparkSession spark = null;
    try {
      spark = a.session();
      long t0 = System.nanoTime();
      write(spark, a.spec(), a.layout(), a.out());
      double seconds = (System.nanoTime() - t0) / 1e9;
      FleetSpec s = a.spec();
      if (a.layout() == Layout.LONG) {
        out.printf("wrote %s: long layout, one row per sample of %d wide rows x %d metrics (%d hosts x %d intervals,"
            + " %d extra metrics, seed %d; %.0f %% of samples absent besides sensor dropouts) as Parquet partitioned"
            + " by date in %.1f s%n", a.out(), s.rows(), Metric.COUNT + s.extraMetrics(), s.hosts(), s.intervals(),
            s.extraMetrics(), s.seed(), 100 * LONG_ABSENT_SHARE, seconds);
        return 0;
      }
      out.printf("wrote %s: %d rows x %d columns (%d hosts x %d intervals, %d extra metrics, seed %d) as Parquet"
          + " partitioned by date in %.1f s%n", a.out(), s.rows(), s.columns(), s.hosts(), s.intervals(),
          s.extraMetrics(), s.seed(), seconds);
      return 0;
    } catch (RuntimeException e) {
      err.println("fleet-telemetry: failed: " + e);
      e.printStackTrace(err);
      return 1;
    } finally {
      if (spark != null) {
        spark.stop();
      }
    }
  }
}
