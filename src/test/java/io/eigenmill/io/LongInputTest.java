package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Timestamp;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Long input ({@code input.layout = long}): a dataset melted to long form fits as its wide table does and as the
 * datasets' reference libraries computed; the buckets and each aggregate against a direct computation in this test;
 * the rules for duplicates, nulls, NaN, sparse metrics, names that are not column names, and bad columns.
 */
class LongInputTest extends SparkSuite {

  /** The dataset with a row id, melted: one row per (id, feature, value), in shuffled order, in 3 files. */
  private static Path melted(String dataset, List<String> features, Path dir) {
    Dataset<Row> wide = spark.read().option("header", "true").option("inferSchema", "true")
        .csv(Datasets.csv(dataset).toString()).withColumn("row_id", functions.monotonically_increasing_id());
    Column[] cells = features.stream().map(f -> functions.struct(functions.lit(f).as("metric"),
        functions.col(f).cast("double").as("value"))).toArray(Column[]::new);
    Dataset<Row> longRows = wide.select(functions.col("row_id"), functions.explode(functions.array(cells)).as("c"))
        .select(functions.col("row_id"), functions.col("c.metric"), functions.col("c.value"))
        .orderBy(functions.rand(7)).repartition(3);
    Path out = dir.resolve(dataset + "-long");
    longRows.write().parquet(out.toString());
    return out;
  }

  @ParameterizedTest(name = "{0}")
  @ValueSource(strings = {"usarrests", "wine"})
  void meltedDatasetFitsAsItsWideTable(String dataset) throws Exception {
    JsonNode ref = Datasets.reference(dataset);
    List<String> features = Datasets.strings(ref.get("feature_columns"));
    Path dir = JobFiles.scratch("long-" + dataset);
    Path longPath = melted(dataset, features, dir);
    String common = "prepare.scaling = standardize\nreduce.method = covariance\nreduce.components = "
        + features.size() + "\n";
    RunResult wide = JobRunner.run(spark, JobFiles.settings("input.path = \"" + Datasets.csv(dataset)
        + "\"\ninput.format = csv\nfeatures.columns = " + JobFiles.quoted(features) + "\n" + common
        + "output.path = \"" + dir.resolve("wide-out") + "\""));
    RunResult lng = JobRunner.run(spark, JobFiles.settings("input.path = \"" + longPath + "\"\ninput.layout = long\n"
        + "input.long { entity = [row_id] }\n" + common + "output.path = \"" + dir.resolve("long-out") + "\""));
    // the metrics are found in the table and sorted by name: compare feature by feature
    List<String> longFeatures = lng.fit().model().features();
    assertEquals(features.stream().sorted().toList(), longFeatures, "metric columns found");
    Spectrum w = wide.fit().spectrum();
    Spectrum l = lng.fit().spectrum();
    int d = features.size();
    double top = w.eigenvalues()[0];
    JsonNode pca = ref.get("pca").get("correlation");
    double[] eigen = Datasets.doubles(pca.get("eigenvalues"));
    double[][] loadings = Datasets.matrix(pca.get("loadings"));
    for (int c = 0; c < d; c++) {
      // long against wide: the same rows summed in another order; n <= 178 terms, rounding ~ n eps ~ 4e-14
      // relative (common practice, no source): 1e-12
      assertEquals(w.eigenvalues()[c], l.eigenvalues()[c], 1e-12 * top, "eigenvalue " + (c + 1) + " long vs wide");
      // R prcomp via shared/datasets/<dataset>.reference.json
      assertEquals(eigen[c], l.eigenvalues()[c], 1e-9 * top, "eigenvalue " + (c + 1) + " vs R");
      for (int j = 0; j < d; j++) {
        int lj = longFeatures.indexOf(features.get(j));
        assertEquals(w.loading(j, c), l.loading(lj, c), 1e-12, "loading c" + (c + 1) + " " + features.get(j));
        if (!(dataset.equals("wine") && c >= d - 2)) {
          assertEquals(loadings[c][j], l.loading(lj, c), 1e-7, "loading c" + (c + 1) + " vs R " + features.get(j));
        }
      }
    }
    assertEquals(ref.get("n").asInt(), lng.fit().model().rows(), "one row per entity");
    assertTrue(Files.exists(dir.resolve("long-out").resolve(LongTable.MAPPING_FILE)), "metric map written");
    assertFalse(Files.exists(dir.resolve("long-out").resolve(LongTable.STAGING)), "pivot staging removed");
  }

  static final StructType TIMED = new StructType().add("host", DataTypes.StringType)
      .add("ts", DataTypes.TimestampType).add("metric", DataTypes.StringType).add("value", DataTypes.DoubleType);

  record Obs(String host, long second, String metric, Double value) {}

  /** Irregular times over 3 five-minute buckets, duplicates, ties, nulls, a NaN, a metric seen once. */
  static List<Obs> observations() {
    List<Obs> obs = new ArrayList<>();
    SplittableRandom r = new SplittableRandom(11);
    long t0 = 1_795_000_200L; // a multiple of 300 s
    for (String h : new String[] {"edge-1", "edge-2"}) {
      for (int i = 0; i < 40; i++) {
        long s = t0 + r.nextInt(900);
        obs.add(new Obs(h, s, "cpu", Math.rint(r.nextDouble() * 1000) / 10));
        if (i % 2 == 0) {
          obs.add(new Obs(h, s, "mem.used%", Math.rint(r.nextDouble() * 1000) / 10));
        }
      }
      // a duplicate (same host, time, metric) with another value, and a tie at the latest time
      obs.add(new Obs(h, t0 + 299, "cpu", 7.5));
      obs.add(new Obs(h, t0 + 299, "cpu", 99.5));
      obs.add(new Obs(h, t0 + 10, "cpu", null));
      obs.add(new Obs(h, t0 + 11, "cpu", Double.NaN));
    }
    obs.add(new Obs("edge-1", t0 + 5, "once", 3.0));
    return obs;
  }

  private static Path timedTable(Path dir) {
    List<Row> rows = new ArrayList<>();
    for (Obs o : observations()) {
      rows.add(RowFactory.create(o.host(), new Timestamp(o.second() * 1000), o.metric(), o.value()));
    }
    Path out = dir.resolve("timed");
    spark.createDataFrame(rows, TIMED).repartition(2).write().parquet(out.toString());
    return out;
  }

  @ParameterizedTest(name = "{0}")
  @ValueSource(strings = {"mean", "last", "max", "min", "sum"})
  void bucketsAndAggregatesMatchADirectComputation(String aggregate) {
    Path dir = JobFiles.scratch("long-agg");
    Path table = timedTable(dir);
    JobSettings settings = JobFiles.settings("input.path = \"" + table + "\"\ninput.layout = long\n"
        + "input.long { entity = [host], time = ts, bucket = \"5 minutes\", aggregate = " + aggregate + " }\n"
        + "output.path = \"" + dir.resolve("out") + "\"");
    LongTable.View view = LongTable.open(spark, settings.input(), settings.features(), null);
    assertEquals(List.of("cpu", "mem.used%", "once"), view.metrics(), "metrics found, sorted");
    String memColumn = LongTable.columnName("mem.used%");
    assertTrue(memColumn.startsWith("mem_used___"), memColumn);
    assertEquals(List.of("cpu", memColumn, "once"), view.columns());
    // direct computation (this test, independent of the pivot): per host, bucket start and metric, the rule
    Map<String, List<double[]>> cells = new HashMap<>();
    for (Obs o : observations()) {
      if (o.value() == null || !Double.isFinite(o.value())) {
        continue; // the documented rule: null, NaN and infinite values are skipped
      }
      long bucket = o.second() - Math.floorMod(o.second(), 300);
      cells.computeIfAbsent(o.host() + "|" + bucket + "|" + o.metric(), k -> new ArrayList<>())
          .add(new double[] {o.value(), o.second()});
    }
    Map<String, Double> expected = new HashMap<>();
    cells.forEach((k, list) -> {
      double v = switch (aggregate) {
        case "mean" -> list.stream().mapToDouble(x -> x[0]).sum() / list.size();
        case "sum" -> list.stream().mapToDouble(x -> x[0]).sum();
        case "max" -> list.stream().mapToDouble(x -> x[0]).max().orElseThrow();
        case "min" -> list.stream().mapToDouble(x -> x[0]).min().orElseThrow();
        default -> {
          // last: latest time; a tie at that time gives the largest value
          double latest = list.stream().mapToDouble(x -> x[1]).max().orElseThrow();
          yield list.stream().filter(x -> x[1] == latest).mapToDouble(x -> x[0]).max().orElseThrow();
        }
      };
      expected.put(k, v);
    });
    List<Row> got = view.wide().collectAsList();
    int present = 0;
    for (Row row : got) {
      String host = row.getString(0);
      long bucket = row.getTimestamp(1).getTime() / 1000;
      assertEquals(0, Math.floorMod(bucket, 300), "bucket start on a 5-minute boundary");
      for (int j = 0; j < 3; j++) {
        String key = host + "|" + bucket + "|" + view.metrics().get(j);
        Double want = expected.get(key);
        if (want == null) {
          assertTrue(row.isNullAt(2 + j), "absent cell " + key);
        } else {
          present++;
          // sums of up to 40 values with one decimal: the pivot adds in the table's order, this test in its own;
          // 1e-12 relative covers the reordering (common practice, no source)
          assertEquals(want, row.getDouble(2 + j), 1e-12 * Math.max(1, Math.abs(want)), key);
        }
      }
    }
    assertEquals(expected.size(), present, "every cell present");
    assertEquals(6, got.size(), "2 hosts x 3 buckets");
  }

  @Test
  void jobOnTimedLongTableDropsTheSparseMetricAndCountsTheSkippedRows() throws Exception {
    Path dir = JobFiles.scratch("long-job");
    Path table = timedTable(dir);
    Path out = dir.resolve("out");
    RunResult run = JobRunner.run(spark, JobFiles.settings("input.path = \"" + table + "\"\ninput.layout = long\n"
        + "input.long { entity = [host], time = ts, bucket = \"5 minutes\" }\nreduce.components = 1\n"
        + "output { path = \"" + out + "\", scores = true }"));
    assertEquals(List.of("cpu", LongTable.columnName("mem.used%")), run.fit().model().features(),
        "once (1 of 6 rows) is below min-presence 0.5");
    assertTrue(run.warnings().stream().anyMatch(w -> w.contains("metric once") && w.contains("dropped")),
        run.warnings().toString());
    LongTable.PivotCounts counts = run.plan().longInput().pivoted();
    assertEquals(2, counts.nullValue(), "null values skipped");
    assertEquals(2, counts.nonFinite(), "NaN skipped");
    assertEquals(6, counts.rows());
    String csv = Files.readString(out.resolve(LongTable.MAPPING_FILE));
    assertTrue(csv.contains("mem.used%," + LongTable.columnName("mem.used%") + ",true"), csv);
    Dataset<Row> scores = spark.read().parquet(out.resolve("scores").toString());
    assertTrue(List.of(scores.columns()).containsAll(List.of("host", "ts")), "entity and bucket keys in scores");
    assertEquals(6, scores.count());
    JsonNode summary = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
    assertEquals(6, summary.get("long_input").get("rows").asLong(), summary.toString());
  }

  @Test
  void applyOnLongInputUsesTheModelsMetrics() {
    Path dir = JobFiles.scratch("long-apply");
    Path table = timedTable(dir);
    String layout = "input.path = \"" + table + "\"\ninput.layout = long\n"
        + "input.long { entity = [host], time = ts, bucket = \"5 minutes\" }\n";
    JobRunner.run(spark, JobFiles.settings(layout + "reduce.components = 1\noutput.path = \"" + dir.resolve("fit")
        + "\""));
    RunResult applied = JobRunner.run(spark, JobFiles.settings(layout + "apply.model = \"" + dir.resolve("fit")
        + "\"\noutput.path = \"" + dir.resolve("apply") + "\""));
    assertEquals(6, applied.monitor().rowsScored());
    assertEquals(2, applied.plan().features().size(), "the model's two metrics, the sparse one left out");
  }

  @Test
  void badColumnsAreRefusedNamingTheSetting() {
    Path dir = JobFiles.scratch("long-bad");
    Path table = timedTable(dir);
    String base = "input.path = \"" + table + "\"\ninput.layout = long\noutput.path = \"" + dir.resolve("o") + "\"\n";
    InvalidJobException e = assertThrows(InvalidJobException.class, () -> JobRunner.run(spark,
        JobFiles.settings(base + "input.long { entity = [host], value = ts }")));
    assertTrue(e.getMessage().contains("input.long.value = ts") && e.getMessage().contains("numeric"),
        e.getMessage());
    e = assertThrows(InvalidJobException.class, () -> JobRunner.run(spark,
        JobFiles.settings(base + "input.long { entity = [hostname] }")));
    assertTrue(e.getMessage().contains("input.long.entity: column hostname is not in the input"), e.getMessage());
    e = assertThrows(InvalidJobException.class, () -> JobRunner.run(spark,
        JobFiles.settings(base + "input.long { entity = [host], max-metrics = 2 }")));
    assertTrue(e.getMessage().contains("input.long.max-metrics = 2"), e.getMessage());
    e = assertThrows(InvalidJobException.class, () -> JobFiles.settings(base + "input.long { entity = [] }"));
    assertTrue(e.getMessage().contains("input.long.entity"), e.getMessage());
    e = assertThrows(InvalidJobException.class, () -> JobFiles.settings(base
        + "input.long { entity = [host], bucket = \"soon\" }"));
    assertTrue(e.getMessage().contains("input.long.bucket = soon"), e.getMessage());
    assertFalse(Files.exists(dir.resolve("o")), "no output");
  }

  @Test
  void columnNamesDependOnTheNameAlone() {
    assertEquals("cpu_user", LongTable.columnName("cpu_user"));
    String a = LongTable.columnName("cpu.user");
    String b = LongTable.columnName("cpu-user");
    assertTrue(a.startsWith("cpu_user__") && b.startsWith("cpu_user__"));
    assertFalse(a.equals(b), "names that clean alike stay apart");
    assertTrue(LongTable.columnName("5xx rate").startsWith("m_5xx_rate__"));
    assertNull(null);
  }

  /** Ten hosts in two regions over two days (the partition column date), four correlated metrics, 10-minute rows. */
  private static Path fleetByDay(Path dir) {
    StructType schema = new StructType().add("host", DataTypes.StringType).add("region", DataTypes.StringType)
        .add("ts", DataTypes.TimestampType).add("metric", DataTypes.StringType).add("value", DataTypes.DoubleType)
        .add("date", DataTypes.StringType);
    List<Row> rows = new ArrayList<>();
    SplittableRandom r = new SplittableRandom(23);
    long day0 = 1_795_046_400L; // 2026-11-18 00:00 UTC (a multiple of 86,400 s)
    for (int day = 0; day < 2; day++) {
      String date = day == 0 ? "2026-11-18" : "2026-11-19";
      for (int h = 0; h < 10; h++) {
        String region = h < 5 ? "north" : "south";
        for (int i = 0; i < 144; i++) {
          long start = day0 + day * 86_400L + i * 600L;
          double u = r.nextGaussian();
          double v = r.nextGaussian();
          double[] x = {u + 0.1 * r.nextGaussian(), (h < 5 ? 2 : -1) * u + v, v - u + 0.2 * r.nextGaussian(),
              r.nextGaussian()};
          for (int j = 0; j < 4; j++) {
            rows.add(RowFactory.create("edge-" + h, region, new Timestamp((start + r.nextInt(600)) * 1000),
                "m" + j, x[j] + h, date));
          }
        }
      }
    }
    Path out = dir.resolve("fleet-long");
    spark.createDataFrame(rows, schema).repartition(3).write().partitionBy("date").parquet(out.toString());
    return out;
  }

  @Test
  void snapshotsAndGroupsWorkOnLongInput() {
    Path dir = JobFiles.scratch("long-snap");
    Path table = fleetByDay(dir);
    String layout = "input.path = \"" + table + "\"\ninput.layout = long\n"
        + "input.long { entity = [host, region], time = ts, bucket = \"10 minutes\" }\nreduce.method = covariance\n"
        + "reduce.components = 2\n";
    Path store = dir.resolve("store");
    RunResult data = JobRunner.run(spark, JobFiles.settings(layout + "output.snapshots = \"" + store + "\"\n"
        + "output.path = \"" + dir.resolve("fit") + "\""));
    assertEquals(List.of("date"), data.plan().partitionColumns(), "the long table's partition column is carried");
    assertEquals(2, data.fit().snapshots().pending().size(), "one snapshot per date (snapshots.by defaults to it)");
    RunResult refit = JobRunner.run(spark, JobFiles.settings("input.snapshots = \"" + store + "\"\n"
        + "reduce.components = 2\noutput.path = \"" + dir.resolve("refit") + "\""));
    double top = data.fit().spectrum().eigenvalues()[0];
    for (int c = 0; c < 4; c++) {
      // the store merges the per-date moments the data fit merged: equal up to the merge order (common practice,
      // no source: a few eps relative)
      assertEquals(data.fit().spectrum().eigenvalues()[c], refit.fit().spectrum().eigenvalues()[c], 1e-12 * top,
          "eigenvalue " + (c + 1) + " from snapshots");
    }
    assertEquals(2 * 10 * 144, data.fit().model().rows(), "one row per host, date and 10-minute bucket");
    RunResult grouped = JobRunner.run(spark, JobFiles.settings(layout + "reduce.group-by = [region]\n"
        + "output.path = \"" + dir.resolve("groups") + "\""));
    assertEquals(2, grouped.fit().groups().models().size(), "one model per region");
    RunResult north = JobRunner.run(spark, JobFiles.settings(layout + "input.where = \"region = 'north'\"\n"
        + "output.path = \"" + dir.resolve("north") + "\""));
    var northModel = grouped.fit().groups().models().entrySet().stream()
        .filter(e -> e.getKey().texts().contains("north")).findFirst().orElseThrow().getValue();
    for (int c = 0; c < 2; c++) {
      // the group's model against a fit of the group's rows alone (input.where on the long rows)
      assertEquals(north.fit().model().eigenvalues()[c], northModel.eigenvalues()[c],
          1e-12 * north.fit().model().eigenvalues()[0], "north eigenvalue " + (c + 1));
    }
  }
}
