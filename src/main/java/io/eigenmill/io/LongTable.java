package io.eigenmill.io;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.engine.LongPivot;
import io.eigenmill.engine.Progress;
import io.eigenmill.engine.SparkLine;
import io.eigenmill.settings.Choices;
import io.eigenmill.settings.Globs;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;
import java.util.zip.CRC32;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.DateType;
import org.apache.spark.sql.types.IntegralType;
import org.apache.spark.sql.types.NumericType;
import org.apache.spark.sql.types.StringType;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.apache.spark.sql.types.TimestampNTZType;
import org.apache.spark.sql.types.TimestampType;

/**
 * A long table ({@code input.layout = long}: one row per entity, time, metric and value) seen as the wide table the
 * job works on: one row per entity and time bucket (and value of the table's partition columns, which are carried as
 * keys), one double column per metric. Opening finds the metric names ({@link #open}); staging runs the pivot
 * ({@link LongPivot}) once and writes the wide rows as Parquet in the run's staging folder, so that every later pass
 * (the fit's, the scores', the clusters') reads Parquet's columnar batches like a wide input's ({@link View#stage}).
 *
 * <p>{@code input.where} applies to the long table, before the pivot (its columns are the long table's).
 */
public final class LongTable {
  /** The folder in a run's staging folder that holds the pivoted rows (deleted before the output is committed). */
  public static final String STAGING = "long-pivot";
  /** The file of a run's output that maps each metric name to its column. */
  public static final String MAPPING_FILE = "metric-columns.csv";
  /** A metric name that is a column name as it stands. */
  private static final Pattern PLAIN = Pattern.compile("[A-Za-z_][A-Za-z0-9_]*");
  /** The form of a renamed metric's column. */
  private static final Pattern RENAMED = Pattern.compile(".*__[0-9a-f]{8}");
  /** Cells a map task holds before it sends them on: 64 MiB. */
  static final long FLUSH_BYTES = 64L << 20;

  private LongTable() {}

  /**
   * The wide view of a long table (lazy: nothing of it runs until staged).
   *
   * @param metrics the metric names, in column order; {@code columns} their column names (the same unless a name
   *     is not a column name: see {@link #columnName})
   * @param keyColumns the row keys of the wide table: entity columns, carried partition columns, time bucket
   * @param carried the long table's partition columns carried as keys (the staged table is partitioned by them)
   * @param bucketColumn the time bucket's column (the time column's name), or null when untimed
   * @param discovered true when the names were found in the table (not listed in features.columns)
   */
  public record View(JobSettings.LongLayout layout, String path, Dataset<Row> wide, List<String> metrics,
      List<String> columns, List<String> keyColumns, List<String> carried, String bucketColumn, boolean discovered,
      LongPivot.Counters counters, PivotCounts pivoted) {

    /** The column names of the metrics below {@code input.long.min-presence}, in column order (after the pivot). */
    public List<String> sparse() {
      List<String> out = new ArrayList<>();
      for (int j = 0; j < columns.size(); j++) {
        if (pivoted.presence(j) < layout.minPresence()) {
          out.add(columns.get(j));
        }
      }
      return out;
    }

    /** Metric name to column name, for the names that changed. */
    public Map<String, String> renamed() {
      Map<String, String> out = new LinkedHashMap<>();
      for (int j = 0; j < metrics.size(); j++) {
        if (!metrics.get(j).equals(columns.get(j))) {
          out.put(metrics.get(j), columns.get(j));
        }
      }
      return out;
    }

    /**
     * Runs the pivot and writes the wide rows under {@code folder} (Parquet, partitioned by the carried columns);
     * returns the staged table, read back, with what the pivot counted.
     */
    public Staged stage(SparkSession spark, String folder) {
      long started = System.nanoTime();
      try (Progress progress = Progress.start(spark, "long pivot", counters.rows())) {
        // the cells are continuous values: a dictionary per column chunk would cost CPU for nothing
        var writer = wide.write().mode("overwrite").option("parquet.enable.dictionary", "false");
        if (!carried.isEmpty()) {
          writer = writer.partitionBy(carried.toArray(String[]::new));
        }
        writer.parquet(folder);
        progress.done(counters.rows().value());
      }
      Dataset<Row> table = spark.read().schema(wide.schema()).parquet(folder);
      var counts = new PivotCounts(counters.pivotedRows().value(), counters.present().value().clone(),
          counters.rows().value(), counters.nullMetric().value(), counters.otherMetric().value(),
          counters.nullValue().value(), counters.nonFinite().value(), counters.nullTime().value(),
          (System.nanoTime() - started) / 1e9);
      View done = new View(layout, path, wide, metrics, columns, keyColumns, carried, bucketColumn, discovered,
          counters, counts);
      return new Staged(done, table, folder);
    }
  }

  /** A staged pivot: the wide rows written under {@code folder} and read back as {@code table}. */
  public record Staged(View view, Dataset<Row> table, String folder) {}

  /**
   * What a pivot counted.
   *
   * @param rows wide rows made; {@code present} for each metric the rows where it has a value
   * @param longRows rows of the long table read (after {@code input.where})
   * @param nullMetric, otherMetric, nullValue, nonFinite, nullTime long rows skipped: no metric name, a metric
   *     not selected, a null value, a NaN or infinite value, a null time
   */
  public record PivotCounts(long rows, long[] present, long longRows, long nullMetric, long otherMetric,
      long nullValue, long nonFinite, long nullTime, double seconds) {
    /** Share of the wide rows where metric {@code j} has a value. */
    public double presence(int j) {
      return rows == 0 ? 0 : (double) present[j] / rows;
    }
  }

  /**
   * Opens the long table of {@code input}: checks its columns, finds the metric names (those {@code features}
   * selects; when {@code wanted} is given, only the metrics whose column names it holds: an apply job's model) and
   * plans the pivot. Reads the metric column once when the names are not listed; nothing else.
   */
  public static View open(SparkSession spark, JobSettings.Input input, JobSettings.Features features,
      Set<String> wanted) {
    JobSettings.LongLayout layout = input.longLayout();
    Dataset<Row> raw = TableLoader.read(spark, input);
    StructType schema = raw.schema();
    List<String> problems = new ArrayList<>();
    for (String e : layout.entity()) {
      DataType type = column(schema, "input.long.entity", e, problems);
      String bad = type == null ? null : KeyColumns.unsupported(type);
      if (bad != null) {
        problems.add("input.long.entity: column " + e + ": " + bad);
      }
    }
    DataType metricType = column(schema, "input.long.metric", layout.metric(), problems);
    if (metricType != null && !(metricType instanceof StringType)) {
      problems.add("input.long.metric = " + layout.metric() + ": the column is " + metricType.simpleString()
          + "; the metric's name must be a string column");
    }
    DataType valueType = column(schema, "input.long.value", layout.value(), problems);
    if (valueType != null && !(valueType instanceof NumericType)) {
      problems.add("input.long.value = " + layout.value() + ": the column is " + valueType.simpleString()
          + "; values must be numeric (cast them to double in the table, or set input.long.value to the numeric"
          + " column)");
    }
    DataType timeType = layout.timed() ? column(schema, "input.long.time", layout.time(), problems) : null;
    boolean seconds = timeType instanceof IntegralType;
    if (timeType != null && !seconds && !(timeType instanceof TimestampType || timeType instanceof DateType
        || timeType instanceof TimestampNTZType)) {
      problems.add("input.long.time = " + layout.time() + ": the column is " + timeType.simpleString() + "; the time"
          + " must be a timestamp, a date or an integer of epoch seconds");
    }
    if (seconds && layout.bucketMicros() % 1_000_000 != 0) {
      problems.add("input.long.bucket: " + layout.bucketMicros() / 1000 + " ms with an integer time column ("
          + layout.time() + ", epoch seconds): the bucket must be whole seconds");
    }
    if (!problems.isEmpty()) {
      throw new InvalidJobException(problems);
    }
    Dataset<Row> filtered = InputFilter.apply(raw, input);
    List<String> carried = carried(raw, input);
    List<String> keyColumns = new ArrayList<>(layout.entity());
    keyColumns.addAll(carried);
    if (layout.timed()) {
      keyColumns.add(layout.time());
    }
    boolean plainList = !features.columns().isEmpty() && features.columns().stream().noneMatch(Globs::isGlob);
    // a model's column that may be a renamed metric (ends in __ and 8 hex digits) is found by discovery
    boolean wantedPlain = wanted != null && wanted.stream().allMatch(w -> PLAIN.matcher(w).matches()
        && !RENAMED.matcher(w).matches());
    List<String> metrics;
    boolean discovered;
    if (wanted != null && wantedPlain) {
      metrics = new ArrayList<>(wanted);
      discovered = false;
    } else if (wanted == null && plainList) {
      metrics = excluded(features.columns(), features.exclude());
      discovered = false;
    } else {
      metrics = discover(filtered, input, layout, wanted == null ? features : new JobSettings.Features(List.of(),
          List.of(), List.of()));
      if (wanted != null) {
        metrics.removeIf(name -> !wanted.contains(columnName(name)));
      }
      discovered = true;
    }
    if (metrics.isEmpty()) {
      throw new InvalidJobException(input.named() + " (input.layout = long): no metric names "
          + (discovered ? "found in column " + layout.metric() + (features.columns().isEmpty() ? ""
              : " matching features.columns = " + features.columns()) : "left after features.exclude")
          + (input.filtered() ? " among the rows input.where keeps" : ""));
    }
    List<String> columns = metrics.stream().map(LongTable::columnName).toList();
    checkNames(metrics, columns, keyColumns);
    Column[] keys = new Column[keyColumns.size()];
    for (int i = 0; i < layout.entity().size() + carried.size(); i++) {
      keys[i] = functions.col(keyColumns.get(i));
    }
    Column time = functions.lit(0L);
    if (layout.timed()) {
      Column t = functions.col(layout.time());
      time = seconds ? t.cast("long") : functions.expr("unix_micros(cast(`" + layout.time() + "` as timestamp))");
      long width = seconds ? layout.bucketMicros() / 1_000_000 : layout.bucketMicros();
      Column start = width == 0 ? time : time.minus(functions.pmod(time, functions.lit(width)));
      keys[keys.length - 1] = (seconds ? start : functions.timestamp_micros(start)).as(layout.time());
    }
    List<Column> selected = new ArrayList<>(List.of(keys));
    selected.add(functions.col(layout.metric()).as("__metric"));
    selected.add(functions.col(layout.value()).cast("double").as("__value"));
    selected.add(time.as("__t"));
    Dataset<Row> prepared = filtered.select(selected.toArray(Column[]::new));
    StructType keySchema = DataTypes.createStructType(java.util.Arrays.copyOf(prepared.schema().fields(),
        keys.length));
    List<StructField> fields = new ArrayList<>(List.of(keySchema.fields()));
    for (String c : columns) {
      fields.add(DataTypes.createStructField(c, DataTypes.DoubleType, true));
    }
    StructType wideSchema = DataTypes.createStructType(fields);
    var sc = spark.sparkContext();
    LongPivot.Counters counters = LongPivot.Counters.register(sc, metrics.size());
    int reducers = Math.max(sc.defaultParallelism(), prepared.rdd().getNumPartitions());
    var spec = new LongPivot.Spec(keySchema, layout.timed(), metrics, layout.aggregate(), FLUSH_BYTES);
    Dataset<Row> wide = SparkLine.fromInternalRows(spark, LongPivot.pivot(prepared, spec, reducers, counters).rdd(),
        wideSchema);
    return new View(layout, input.path(), wide, List.copyOf(metrics), columns, List.copyOf(keyColumns),
        List.copyOf(carried), layout.timed() ? layout.time() : null, discovered, counters, null);
  }

  /**
   * The long table's partition columns that the pivot carries as keys of its rows (those that are not the entity,
   * time, metric or value column). Reads the schema and lists the files; no data.
   */
  public static List<String> carried(SparkSession spark, JobSettings.Input input) {
    return carried(TableLoader.read(spark, input), input);
  }

  private static List<String> carried(Dataset<Row> raw, JobSettings.Input input) {
    JobSettings.LongLayout layout = input.longLayout();
    List<String> out = new ArrayList<>();
    for (String p : TableLoader.partitionColumns(raw, input)) {
      if (!layout.entity().contains(p) && !p.equals(layout.time()) && !p.equals(layout.metric())
          && !p.equals(layout.value())) {
        out.add(p);
      }
    }
    return out;
  }

  /**
   * The column of a metric: its name when that is a column name ({@code [A-Za-z_][A-Za-z0-9_]*}); otherwise the
   * name with every other character replaced by {@code _} (and {@code m_} in front when it does not start with a
   * letter or {@code _}), then {@code __} and the CRC-32 of the name in 8 hex digits, so that the column depends on
   * the name alone (a fit and a later apply map it alike) and two names that clean to the same text stay apart.
   */
  public static String columnName(String metric) {
    if (PLAIN.matcher(metric).matches()) {
      return metric;
    }
    String clean = metric.replaceAll("[^A-Za-z0-9_]", "_");
    if (clean.isEmpty() || !(Character.isLetter(clean.charAt(0)) || clean.charAt(0) == '_')) {
      clean = "m_" + clean;
    }
    CRC32 crc = new CRC32();
    crc.update(metric.getBytes(StandardCharsets.UTF_8));
    return clean + "__" + String.format(Locale.ROOT, "%08x", crc.getValue());
  }

  /**
   * The metric-to-column map as CSV (RFC 4180 quoting): metric, column, renamed, and after the pivot the rows
   * where the metric has a value and their share.
   */
  public static String mappingCsv(View view) {
    StringBuilder s = new StringBuilder("metric,column,renamed,rows_present,presence\n");
    for (int j = 0; j < view.metrics().size(); j++) {
      String m = view.metrics().get(j);
      String c = view.columns().get(j);
      s.append(csv(m)).append(',').append(csv(c)).append(',').append(!m.equals(c)).append(',');
      if (view.pivoted() != null) {
        s.append(view.pivoted().present()[j]).append(',').append(String.format(Locale.ROOT, "%.6f",
            view.pivoted().presence(j)));
      } else {
        s.append(',');
      }
      s.append('\n');
    }
    return s.toString();
  }

  private static String csv(String text) {
    return text.matches("[^,\"\r\n]*") ? text : "\"" + text.replace("\"", "\"\"") + "\"";
  }

  /** Metric names selected by the globs, read from the metric column: one cheap pass (one string column). */
  private static List<String> discover(Dataset<Row> filtered, JobSettings.Input input,
      JobSettings.LongLayout layout, JobSettings.Features features) {
    Column metric = functions.col(layout.metric());
    Dataset<Row> names = filtered.select(metric).where(metric.isNotNull());
    if (!features.columns().isEmpty()) {
      names = names.where(metric.rlike(Globs.anyOf(features.columns())));
    }
    if (!features.exclude().isEmpty()) {
      names = names.where(functions.not(metric.rlike(Globs.anyOf(features.exclude()))));
    }
    List<Row> found = names.distinct().limit(layout.maxMetrics() + 1).collectAsList();
    if (found.size() > layout.maxMetrics()) {
      throw new InvalidJobException("input.long.max-metrics = " + layout.maxMetrics() + ": " + input.named()
          + " has more metric names than that in column " + layout.metric()
          + (features.columns().isEmpty() ? "" : " matching features.columns = " + features.columns())
          + "; select the metrics with features.columns (names or globs) and features.exclude, or raise"
          + " input.long.max-metrics");
    }
    List<String> out = new ArrayList<>();
    for (Row r : found) {
      out.add(r.getString(0));
    }
    out.sort(null);
    return out;
  }

  private static List<String> excluded(List<String> names, List<String> exclude) {
    List<String> out = new ArrayList<>();
    Pattern drop = exclude.isEmpty() ? null : Pattern.compile(Globs.anyOf(exclude));
    for (String n : names) {
      if ((drop == null || !drop.matcher(n).matches()) && !out.contains(n)) {
        out.add(n);
      }
    }
    return out;
  }

  /** Column names must differ from each other and from the keys, ignoring case (as Spark resolves them). */
  private static void checkNames(List<String> metrics, List<String> columns, List<String> keyColumns) {
    Map<String, String> seen = new HashMap<>();
    for (String k : keyColumns) {
      seen.put(k.toLowerCase(Locale.ROOT), "key column " + k);
    }
    List<String> problems = new ArrayList<>();
    for (int j = 0; j < metrics.size(); j++) {
      String lower = columns.get(j).toLowerCase(Locale.ROOT);
      String earlier = seen.putIfAbsent(lower, "metric " + metrics.get(j));
      if (earlier != null) {
        problems.add("input.long.metric: metric " + metrics.get(j) + " would become column " + columns.get(j)
            + ", which " + earlier + " already names (column names ignore case); exclude one with"
            + " features.exclude or rename it in the table");
      }
    }
    if (!problems.isEmpty()) {
      throw new InvalidJobException(problems);
    }
  }

  private static DataType column(StructType schema, String key, String name, List<String> problems) {
    var index = schema.getFieldIndex(name);
    if (index.isEmpty()) {
      problems.add(key + ": column " + name + " is not in the input (columns: " + String.join(", ",
          schema.fieldNames()) + ")");
      return null;
    }
    return schema.fields()[(Integer) index.get()].dataType();
  }
}
