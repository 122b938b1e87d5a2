package io.eigenmill.demo;

import static org.apache.spark.sql.functions.col;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.demo.FleetTelemetryGenerator.FleetSpec;
import io.eigenmill.io.WriterSession;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.stream.Collectors;
import java.util.stream.Stream;
import org.apache.hadoop.conf.Configuration;
import org.apache.parquet.hadoop.ParquetFileReader;
import org.apache.parquet.hadoop.util.HadoopInputFile;
import org.apache.parquet.schema.LogicalTypeAnnotation;
import org.apache.parquet.schema.PrimitiveType.PrimitiveTypeName;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The demo table on small sizes: schema, exact size, determinism across partitionings, missing cells, faults, the
 * extra metrics and the Parquet output. The fleet of the 3,000-row table has 38 hosts over 79 intervals and 4 faulty
 * hosts, one per fault kind.
 */
class FleetTelemetryGeneratorTest extends SparkSuite {
  private static final FleetSpec SMALL = FleetSpec.defaults().withRows(3_000).withExtraMetrics(5).withPartitions(3);
  private static final long FIVE_MINUTES_MS = 300_000L;

  private static List<Row> small;

  @BeforeAll
  static void generateSmall() {
    small = sorted(FleetTelemetryGenerator.generate(spark, SMALL));
  }

  @Test
  void schemaHasKeysMetricsAndStorageTypes() {
    StructType schema = FleetTelemetryGenerator.generate(spark, SMALL).schema();
    assertEquals(FleetTelemetryGenerator.schema(5), schema);
    List<String> names = List.of(schema.fieldNames());
    assertEquals(List.of("host", "region", "workload", "ts", "date", "fault"), names.subList(0, 6));
    int metrics = Metric.COUNT;
    assertTrue(metrics >= 40 && metrics <= 80, "base metrics: " + metrics);
    assertEquals(6 + metrics + 5, names.size());
    assertEquals(List.of("x_0001", "x_0002", "x_0003", "x_0004", "x_0005"), names.subList(6 + metrics, names.size()));
    assertEquals(DataTypes.TimestampType, type(schema, "ts"));
    assertEquals(DataTypes.StringType, type(schema, "date"));
    assertTrue(schema.apply("fault").nullable());
    assertEquals(DataTypes.IntegerType, type(schema, "open_files"));
    assertEquals(DataTypes.LongType, type(schema, "tcp_connections"));
    assertEquals(DataTypes.FloatType, type(schema, "cpu_freq_ghz"));
    Map<DataType, Long> kinds = Stream.of(schema.fields()).skip(6)
        .collect(Collectors.groupingBy(StructField::dataType, Collectors.counting()));
    long doubles = metrics - 5 + 5; // all but three int, one long and one float metric; plus five extras
    assertEquals(Map.of(DataTypes.DoubleType, doubles, DataTypes.IntegerType, 3L, DataTypes.LongType, 1L,
        DataTypes.FloatType, 1L), kinds);
    assertEquals(FleetTelemetryGenerator.metricColumns(5), names.subList(6, names.size()));
    assertEquals(FleetTelemetryGenerator.metricColumns(0), List.copyOf(FleetTelemetryGenerator.metricUnits().keySet()));
    assertEquals("rpm", FleetTelemetryGenerator.metricUnits().get("fan_2_rpm"));
    Row first = small.get(0);
    assertEquals("edge-", first.getString(0).substring(0, 5));
    assertTrue(first.get(3) instanceof java.sql.Timestamp, "ts is a timestamp: " + first.get(3).getClass());
    assertTrue(first.get(names.indexOf("open_files")) instanceof Integer);
    assertTrue(first.get(names.indexOf("tcp_connections")) instanceof Long);
    assertTrue(first.get(names.indexOf("cpu_freq_ghz")) instanceof Float);
  }

  @Test
  void rowCountIsExactAndEveryHostStartsAtTheFirstInterval() {
    for (long rows : new long[] {2_999, 7}) {
      FleetSpec spec = SMALL.withRows(rows).withExtraMetrics(0);
      Dataset<Row> df = FleetTelemetryGenerator.generate(spark, spec);
      assertEquals(rows, df.count(), "rows of " + spec);
      assertEquals(spec.hosts(), df.select("host").distinct().count(), "hosts of " + spec);
      Row span = df.agg(functions.min("ts"), functions.max("ts")).first();
      assertEquals(Instant.parse("2026-11-02T00:00:00Z"), span.getTimestamp(0).toInstant(), "first interval");
      long stepsMs = span.getTimestamp(1).getTime() - span.getTimestamp(0).getTime();
      assertEquals((spec.intervals() - 1) * FIVE_MINUTES_MS, stepsMs, "span of " + spec);
    }
    assertEquals(3_000, small.size());
    assertEquals(38, SMALL.hosts());
    assertEquals(79, SMALL.intervals());
  }

  @Test
  void sameSeedGivesSameRowsWhateverThePartitioning() {
    List<Row> one = sorted(FleetTelemetryGenerator.generate(spark, SMALL.withPartitions(1)));
    List<Row> five = sorted(FleetTelemetryGenerator.generate(spark, SMALL.withPartitions(5)));
    assertEquals(one.size(), five.size());
    for (int i = 0; i < one.size(); i++) {
      assertEquals(one.get(i), five.get(i), "row " + i);
      assertEquals(one.get(i), small.get(i), "row " + i + " against 3 partitions");
    }
  }

  @Test
  void anotherSeedGivesOtherValues() {
    List<Row> other = sorted(FleetTelemetryGenerator.generate(spark, SMALL.withSeed(SMALL.seed() + 1)));
    int power = other.get(0).fieldIndex("power_w");
    int same = 0;
    for (int i = 0; i < other.size(); i++) {
      if (other.get(i).getDouble(power) == small.get(i).getDouble(power)) {
        same++;
      }
    }
    assertEquals(0, same, "rows with the same power reading under two seeds");
  }

  /**
   * The dropping sensors' null shares are 0.4, 0.7 and 0.5 % by construction: on 30,000 rows each count lies 5
   * binomial standard deviations or more inside the 0.2-1 % band, and their pooled share (0.53 %, sd 0.02 %) inside
   * 0.4-0.7 %. NaN appears only in the PSU efficiency, about 6 times (probability 2e-4 per row).
   */
  @Test
  void missingCellsStayInTheirBand() {
    FleetSpec spec = SMALL.withRows(30_000).withExtraMetrics(0);
    Dataset<Row> df = FleetTelemetryGenerator.generate(spark, spec);
    List<String> metrics = FleetTelemetryGenerator.metricColumns(0);
    List<Column> aggs = new ArrayList<>();
    for (String m : metrics) {
      aggs.add(functions.sum(functions.when(col(m).isNull(), 1).otherwise(0)).as("null_" + m));
      aggs.add(functions.sum(functions.when(functions.isnan(col(m)), 1).otherwise(0)).as("nan_" + m));
    }
    Row counts = df.agg(aggs.get(0), aggs.subList(1, aggs.size()).toArray(new Column[0])).first();
    List<String> dropping = List.of("inlet_temp_c", "nvme_temp_c", "fan_4_rpm");
    long droppedCells = 0;
    for (String m : metrics) {
      long nulls = counts.getLong(counts.fieldIndex("null_" + m));
      long nans = counts.getLong(counts.fieldIndex("nan_" + m));
      if (dropping.contains(m)) {
        double share = nulls / (double) spec.rows();
        assertTrue(share >= 0.002 && share <= 0.01, m + " null share " + share);
        droppedCells += nulls;
      } else {
        assertEquals(0, nulls, "nulls in " + m);
      }
      if (m.equals("psu_efficiency_pct")) {
        assertTrue(nans >= 1 && nans <= 30, "NaN readings of " + m + ": " + nans);
      } else {
        assertEquals(0, nans, "NaN in " + m);
      }
    }
    double share = droppedCells / (3.0 * spec.rows());
    assertTrue(share > 0.004 && share < 0.007, "null share of the dropping sensors " + share);
    assertEquals(0, df.filter(col("host").isNull().or(col("ts").isNull()).or(col("date").isNull())).count());
  }

  @Test
  void everyFaultIsOnOneHostOverOneWindowAndClearlyVisible() {
    Map<String, List<Row>> byHost = new TreeMap<>();
    for (Row r : small) {
      byHost.computeIfAbsent(r.getString(0), h -> new ArrayList<>()).add(r);
    }
    Map<String, String> faultOfHost = new HashMap<>();
    for (Map.Entry<String, List<Row>> e : byHost.entrySet()) {
      List<Row> rows = e.getValue();
      List<Integer> window = new ArrayList<>();
      for (int i = 0; i < rows.size(); i++) {
        String f = rows.get(i).getString(5);
        if (f != null) {
          window.add(i);
          String before = faultOfHost.put(e.getKey(), f);
          assertTrue(before == null || before.equals(f), e.getKey() + " has two faults");
        }
      }
      if (window.isEmpty()) {
        continue;
      }
      int start = window.get(0);
      int end = window.get(window.size() - 1) + 1;
      assertEquals(end - start, window.size(), e.getKey() + ": fault rows are one contiguous window");
      assertTrue(window.size() >= 3, e.getKey() + " window " + window.size());
      checkVisible(faultOfHost.get(e.getKey()), e.getKey(), rows, start, end);
    }
    assertEquals(Math.max(4, SMALL.hosts() / 40), faultOfHost.size(), "faulty hosts: " + faultOfHost);
    assertEquals(FleetTelemetryGenerator.faultNames().stream().sorted().toList(),
        faultOfHost.values().stream().sorted().toList(), "one host per fault kind");
  }

  /**
   * Compares the fault window with the same host's healthy rows just before and after it (as many as the window is
   * long), so that the daily cycle cannot explain the difference.
   */
  private static void checkVisible(String fault, String host, List<Row> rows, int start, int end) {
    List<Row> in = rows.subList(start, end);
    List<Row> around = new ArrayList<>(rows.subList(Math.max(0, 2 * start - end), start));
    around.addAll(rows.subList(end, Math.min(rows.size(), 2 * end - start)));
    String what = fault + " on " + host;
    switch (fault) {
      case "failing_fan" -> {
        assertTrue(mean(in, FleetTelemetryGeneratorTest::slowestFan) < 0.2 * mean(around,
            FleetTelemetryGeneratorTest::slowestFan), what + ": slowest fan");
        assertTrue(mean(in, r -> num(r, "cpu_temp_c")) > mean(around, r -> num(r, "cpu_temp_c")) + 8,
            what + ": CPU temperature");
        assertTrue(mean(in, r -> num(r, "exhaust_temp_c")) > mean(around, r -> num(r, "exhaust_temp_c")) + 3,
            what + ": exhaust temperature");
      }
      case "saturated_disk" -> {
        for (Row r : in) {
          assertTrue(num(r, "disk_util_pct") > 95, what + ": utilisation " + num(r, "disk_util_pct"));
        }
        assertTrue(mean(in, r -> num(r, "cpu_iowait_pct")) > 10 * mean(around, r -> num(r, "cpu_iowait_pct")),
            what + ": iowait");
        assertTrue(mean(in, r -> num(r, "disk_read_latency_ms")) > 10 * mean(around,
            r -> num(r, "disk_read_latency_ms")), what + ": read latency");
      }
      case "network_errors" -> {
        assertTrue(mean(in, r -> num(r, "net_retransmit_pct")) > 3 + mean(around, r -> num(r, "net_retransmit_pct")),
            what + ": retransmits");
        // egress per connection: demand moves both alike, the fault halves one and inflates the other
        assertTrue(mean(in, FleetTelemetryGeneratorTest::egressPerConnection) < 0.6 * mean(around,
            FleetTelemetryGeneratorTest::egressPerConnection), what + ": throughput");
      }
      case "cache_degradation" -> {
        assertTrue(mean(in, r -> num(r, "cache_hit_ratio")) < mean(around, r -> num(r, "cache_hit_ratio")) - 0.15,
            what + ": hit ratio");
        assertTrue(mean(in, FleetTelemetryGeneratorTest::originShare) > 3 * mean(around,
            FleetTelemetryGeneratorTest::originShare), what + ": origin fetch per egress");
      }
      default -> throw new AssertionError("unexpected fault " + fault);
    }
  }

  @Test
  void extraMetricsFollowTheBaseMetrics() {
    FleetSpec spec = SMALL.withExtraMetrics(40);
    List<Row> rows = FleetTelemetryGenerator.generate(spark, spec).collectAsList();
    List<String> base = new ArrayList<>();
    StructType schema = FleetTelemetryGenerator.schema(0);
    for (StructField f : schema.fields()) {
      if (f.dataType().equals(DataTypes.DoubleType) && !f.nullable() && !f.name().equals("psu_efficiency_pct")) {
        base.add(f.name());
      }
    }
    int strong = 0;
    for (int j = 0; j < 40; j++) {
      String x = ExtraMetrics.name(j, 40);
      double best = 0;
      for (String b : base) {
        best = Math.max(best, Math.abs(correlation(rows, x, b)));
      }
      if (best > 0.3) {
        strong++;
      }
    }
    // each extra column loads on one to three of the six drivers with N(0, 1) weights and noise sd below 1
    assertTrue(strong >= 30, "extra columns correlated above 0.3 with a base metric: " + strong + " of 40");
    assertEquals("x_0040", ExtraMetrics.name(39, 40));
    assertEquals("x_00001", ExtraMetrics.name(0, 20_000));
    assertEquals("x_20000", ExtraMetrics.name(19_999, 20_000));
  }

  @Test
  void writeProducesParquetPartitionedByDateAndOverwrites() throws Exception {
    Path out = Files.createTempDirectory("eigenmill-fleet-").resolve("telemetry");
    FleetSpec twoDays = SMALL.withRows(41_000).withExtraMetrics(0).withPartitions(2);
    assertTrue(twoDays.intervals() > 288, "spans two days: " + twoDays.intervals());
    FleetTelemetryGenerator.write(spark, twoDays, out.toString());
    assertTrue(Files.isDirectory(out.resolve("date=2026-11-02")));
    assertTrue(Files.isDirectory(out.resolve("date=2026-11-03")));
    Dataset<Row> back = spark.read().parquet(out.toString());
    assertEquals(twoDays.rows(), back.count());
    assertEquals(twoDays.columns(), back.columns().length);
    assertEquals(2, back.select("date").distinct().count());
    assertEquals(DataTypes.LongType, type(back.schema(), "tcp_connections"));
    // Apache Parquet format, LogicalTypes.md: an instant is INT64 TIMESTAMP(isAdjustedToUTC = true, unit), which
    // readers other than Spark understand (Spark 3.5's default, INT96, has no logical type)
    try (Stream<Path> files = Files.walk(out)) {
      Path part = files.filter(p -> p.getFileName().toString().endsWith(".parquet")).findFirst().orElseThrow();
      try (ParquetFileReader reader = ParquetFileReader.open(HadoopInputFile.fromPath(
          new org.apache.hadoop.fs.Path(part.toUri()), new Configuration()))) {
        org.apache.parquet.schema.Type ts = reader.getFooter().getFileMetaData().getSchema().getType("ts");
        assertEquals(PrimitiveTypeName.INT64, ts.asPrimitiveType().getPrimitiveTypeName(), part.toString());
        assertEquals(LogicalTypeAnnotation.timestampType(true, LogicalTypeAnnotation.TimeUnit.MICROS),
            ts.getLogicalTypeAnnotation(), part.toString());
      }
    }
    assertFalse(WriterSession.MICROS.equals(spark.conf().get(WriterSession.TIMESTAMP_TYPE)),
        "the caller's session keeps Spark's default");

    FleetSpec wide = SMALL.withRows(100).withExtraMetrics(FleetTelemetryGenerator.WIDE_COLUMNS).withPartitions(1);
    assertTrue(wide.columns() > FleetTelemetryGenerator.WIDE_COLUMNS);
    FleetTelemetryGenerator.write(spark, wide, out.toString());
    assertFalse(spark.conf().contains("spark.sql.codegen.factoryMode"), "an unset codegen mode is unset again");
    assertFalse(Files.isDirectory(out.resolve("date=2026-11-03")), "the old table was replaced");
    Dataset<Row> again = spark.read().parquet(out.toString());
    assertEquals(100, again.count());
    assertEquals(wide.columns(), again.columns().length);

    spark.conf().set("spark.sql.codegen.factoryMode", "FALLBACK");
    try {
      FleetTelemetryGenerator.write(spark, wide.withRows(10), out.toString());
      assertEquals("FALLBACK", spark.conf().get("spark.sql.codegen.factoryMode"), "a mode set before is restored");
    } finally {
      spark.conf().unset("spark.sql.codegen.factoryMode");
    }
    assertEquals(10, spark.read().parquet(out.toString()).count());
  }

  private static List<Row> sorted(Dataset<Row> df) {
    return df.orderBy("host", "ts").collectAsList();
  }

  private static DataType type(StructType schema, String name) {
    return schema.apply(name).dataType();
  }

  private static double num(Row r, String name) {
    return ((Number) r.get(r.fieldIndex(name))).doubleValue();
  }

  private static double slowestFan(Row r) {
    return Math.min(num(r, "fan_1_rpm"), Math.min(num(r, "fan_2_rpm"), num(r, "fan_3_rpm")));
  }

  private static double egressPerConnection(Row r) {
    return num(r, "net_tx_gbps") / num(r, "tcp_connections");
  }

  private static double originShare(Row r) {
    return num(r, "origin_fetch_gbps") / num(r, "net_tx_gbps");
  }

  private static double mean(List<Row> rows, java.util.function.ToDoubleFunction<Row> f) {
    assertFalse(rows.isEmpty(), "no rows to average");
    return rows.stream().mapToDouble(f).average().orElseThrow();
  }

  private static double correlation(List<Row> rows, String a, String b) {
    int n = rows.size();
    double ma = mean(rows, r -> num(r, a));
    double mb = mean(rows, r -> num(r, b));
    double sab = 0;
    double saa = 0;
    double sbb = 0;
    for (Row r : rows) {
      double da = num(r, a) - ma;
      double db = num(r, b) - mb;
      sab += da * db;
      saa += da * da;
      sbb += db * db;
    }
    return n < 2 ? 0 : sab / Math.sqrt(saa * sbb);
  }
}
