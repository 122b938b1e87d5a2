package io.eigenmill.monitor;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.math.HashSample;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Path;
import java.sql.Timestamp;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The scoring pass's two readers and what it gathers on the way. The columnar reader (Parquet batches) and the row
 * reader (the same files with Spark's vectorised Parquet reader switched off, so the same rows in the same order
 * and partitions) must write the same rows and count the same. The monitoring series is checked against a
 * brute-force groupBy over the written scores, computed here; the score sample against the same run on the table
 * written in one file instead of three.
 */
class ScoringPassTest extends SparkSuite {
  private static final String VECTORIZED = "spark.sql.parquet.enableVectorizedReader";
  private static final int ROWS = 3000;
  /** Seconds between rows: 3000 rows span 21,000 s (across midnight UTC), 657 buckets of 32 s, 329 of 64 s. */
  private static final int STEP = 7;
  private static final long START = java.time.Instant.parse("2026-11-02T20:00:00Z").getEpochSecond();

  private static Path dir;
  private static PcaModel model;

  /**
   * Two latent factors in five double features and an int feature; keys host (string) and ts (timestamp), the
   * table partitioned by day (a date) unless {@code byDay} is false, written in {@code files} files (per day).
   * Some rows have a null, a NaN or an infinite feature; every 500th row lies far along the first factor (T2), every
   * 450th off the model's plane (Q).
   */
  private static String table(String name, int files) {
    return table(name, files, true);
  }

  private static String table(String name, int files, boolean byDay) {
    SplittableRandom r = new SplittableRandom(5);
    StructType schema = new StructType().add("host", DataTypes.StringType).add("ts", DataTypes.TimestampType)
        .add("seq", DataTypes.IntegerType).add("m0", DataTypes.DoubleType).add("m1", DataTypes.DoubleType)
        .add("m2", DataTypes.DoubleType).add("m3", DataTypes.DoubleType).add("m4", DataTypes.DoubleType)
        .add("m5", DataTypes.IntegerType);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < ROWS; i++) {
      double f1 = i % 500 == 20 ? 15 : r.nextDouble() * 6 - 3;
      double f2 = r.nextDouble() * 4 - 2;
      Double m0 = i % 101 == 3 ? Double.POSITIVE_INFINITY : 10 + f1 + 0.05 * r.nextDouble();
      Double m1 = i % 97 == 5 ? null : 5 - 0.8 * f1 + 0.6 * f2 + 0.05 * r.nextDouble();
      Double m2 = i % 89 == 7 ? Double.NaN : 2 * f2 + 0.05 * r.nextDouble();
      double m3 = 0.5 * f1 + f2 + 0.05 * r.nextDouble() + (i % 450 == 30 ? 4 : 0);
      double m4 = 100 + 3 * f2 + 0.1 * r.nextDouble();
      int m5 = (int) Math.round(20 * f1 - 10 * f2);
      rows.add(RowFactory.create("h" + (i % 13), new Timestamp((START + (long) STEP * i) * 1000), i, m0, m1, m2,
          m3, m4, m5));
    }
    String path = dir.resolve(name).toString();
    Dataset<Row> t = spark.createDataFrame(rows, schema).repartition(files);
    if (byDay) {
      t.withColumn("day", functions.to_date(functions.col("ts"))).write().partitionBy("day").parquet(path);
    } else {
      t.write().parquet(path);
    }
    return path;
  }

  @BeforeAll
  static void fitTheModel() {
    dir = JobFiles.scratch("scoring-paths");
    String train = table("train", 3);
    model = JobRunner.run(spark, JobFiles.settings("input.path = \"" + train + "\"\nfeatures.columns = [\"m*\"]\n"
        + "features.keys = [host, ts]\nreduce.components = 2\nprepare.scaling = standardize\n"
        + "output.path = \"" + dir.resolve("fit") + "\"\n")).model();
  }

  private static JobSettings settings(String extra) {
    return JobFiles.settings("input.path = \"" + dir + "\"\nfeatures.keys = [host, ts]\noutput.report-sample = 40\n"
        + "output.path = \"" + dir.resolve("unused") + "\"\n" + extra);
  }

  /** One pass written to {@code out}, with its accumulators. */
  private record Pass(boolean columnar, ScoringPass.Counters counters, List<Row> rows) {}

  private static Pass pass(String input, boolean vectorized, JobSettings settings, boolean reconstruct,
      String out) {
    spark.conf().set(VECTORIZED, String.valueOf(vectorized));
    try {
      ScoringPass.Limits limits = reconstruct ? ScoringPass.Limits.none()
          : ScoringPass.Limits.of(model, settings.monitor(), false);
      ScoringPass.Spec spec = ScoringPass.spec(model, settings, limits, reconstruct);
      ScoringPass.Counters counters = ScoringPass.Counters.register(spark.sparkContext(), "test", spec, 20);
      ScoringPass.Scored scored = ScoringPass.apply(spark.read().parquet(input), List.of("host", "ts"),
          List.of("day"), spec, counters);
      String path = dir.resolve(out).toString();
      scored.rows().write().partitionBy("day").parquet(path);
      Dataset<Row> written = spark.read().parquet(path);
      // a stable column order and row order for comparing: the written columns as the pass emitted them
      Column[] cols = java.util.Arrays.stream(scored.rows().columns()).map(functions::col).toArray(Column[]::new);
      return new Pass(scored.columnar(), counters, written.select(cols).orderBy("host", "ts").collectAsList());
    } finally {
      spark.conf().unset(VECTORIZED);
    }
  }

  private static void assertSamePasses(Pass columnar, Pass rows, String what) {
    assertTrue(columnar.columnar(), what + ": the Parquet table is read as columnar batches");
    assertFalse(rows.columnar(), what + ": with the vectorised reader off, the pass reads rows");
    assertEquals(columnar.rows().size(), rows.rows().size(), what + ": rows written");
    for (int i = 0; i < columnar.rows().size(); i++) {
      // exact: the same rows in the same blocks go through the same arithmetic
      assertEquals(columnar.rows().get(i), rows.rows().get(i), what + ": row " + i);
    }
    ScoringPass.Counters a = columnar.counters();
    ScoringPass.Counters b = rows.counters();
    assertEquals(a.scored().value(), b.scored().value(), what + ": scored");
    assertEquals(a.dropped().value(), b.dropped().value(), what + ": dropped");
    assertEquals(a.flaggedT2().value(), b.flaggedT2().value(), what + ": flagged T2");
    assertEquals(a.flaggedQ().value(), b.flaggedQ().value(), what + ": flagged Q");
    assertEquals(a.flaggedBoth().value(), b.flaggedBoth().value(), what + ": flagged both");
    List<TopRows.Candidate> ta = a.top().value();
    List<TopRows.Candidate> tb = b.top().value();
    assertEquals(ta.size(), tb.size(), what + ": top rows");
    for (int i = 0; i < ta.size(); i++) {
      assertEquals(ta.get(i).keys(), tb.get(i).keys(), what + ": top row " + i);
      assertEquals(ta.get(i).severity(), tb.get(i).severity(), 0.0, what + ": top row " + i);
      assertArrayEquals(ta.get(i).topFeatures(), tb.get(i).topFeatures(), what + ": top row " + i);
      assertArrayEquals(ta.get(i).topContributions(), tb.get(i).topContributions(), what + ": top row " + i);
    }
    FeatureErrors.Sums ea = a.errors().value();
    FeatureErrors.Sums eb = b.errors().value();
    assertEquals(ea.rows(), eb.rows(), what + ": reconstructed rows");
    assertArrayEquals(ea.squaredError(), eb.squaredError(), what + ": squared errors");
    assertArrayEquals(ea.maxAbsError(), eb.maxAbsError(), what + ": largest errors");
    assertArrayEquals(ea.squaredDeviation(), eb.squaredDeviation(), what + ": squared deviations");
    assertEquals(keys(a.sample().value()), keys(b.sample().value()), what + ": score sample");
    assertArrayEquals(a.series().value().points().starts(), b.series().value().points().starts(), what
        + ": series buckets");
    assertArrayEquals(a.series().value().points().maxA(), b.series().value().points().maxA(), what
        + ": series T2 maxima");
  }

  private static List<String> keys(HashSample<ScoringPass.SampledRow> sample) {
    List<String> out = new ArrayList<>();
    for (HashSample.Entry<ScoringPass.SampledRow> e : sample.entries()) {
      out.add(java.util.Arrays.toString(e.value().keys()) + java.util.Arrays.toString(e.value().scores()));
    }
    return out;
  }

  @Test
  void columnarAndRowReadersWriteTheSameRowsAndCountTheSame() {
    String input = table("apply", 3);
    for (String missing : List.of("drop-rows", "impute-mean")) {
      JobSettings s = settings("prepare.missing = " + missing + "\n");
      Pass columnar = pass(input, true, s, false, "columnar-" + missing);
      Pass rows = pass(input, false, s, false, "rows-" + missing);
      assertSamePasses(columnar, rows, missing);
      // brute force over the rows generated above: every 101st (from 3), 97th (from 5), 89th (from 7) row has a
      // missing feature
      long bad = 0;
      for (int i = 0; i < ROWS; i++) {
        bad += i % 101 == 3 || i % 97 == 5 || i % 89 == 7 ? 1 : 0;
      }
      boolean drop = missing.equals("drop-rows");
      assertEquals(drop ? ROWS - bad : ROWS, columnar.counters().scored().value(), missing + ": scored");
      assertEquals(drop ? bad : 0, columnar.counters().dropped().value(), missing + ": dropped");
      // flags against the written T2 and the limit, counted here
      long overT2 = columnar.rows().stream().filter(r -> r.getBoolean(r.fieldIndex("flag_t2"))).count();
      assertEquals(overT2, columnar.counters().flaggedT2().value(), missing + ": flagged T2");
      assertTrue(overT2 > 0 && columnar.counters().flaggedQ().value() > 0, "the limits flag some rows");
      assertEquals(20, columnar.counters().top().value().size());
    }
    JobSettings s = settings("");
    assertSamePasses(pass(input, true, s, true, "columnar-rebuilt"), pass(input, false, s, true, "rows-rebuilt"),
        "reconstruction");
  }

  @Test
  void keysAndPartitionColumnsComeThroughUnchanged() {
    String input = table("keys", 3);
    Pass p = pass(input, true, settings(""), false, "keys-out");
    assertTrue(p.columnar());
    // the input's rows with every feature finite, by brute force over the table as Spark reads it
    Column finite = functions.lit(true);
    for (String f : List.of("m0", "m1", "m2", "m3", "m4", "m5")) {
      Column c = functions.col(f).cast("double");
      finite = finite.and(c.isNotNull()).and(functions.not(functions.isnan(c)))
          .and(functions.abs(c).notEqual(Double.POSITIVE_INFINITY));
    }
    List<Row> expected = spark.read().parquet(input).filter(finite).select("host", "ts", "day")
        .orderBy("host", "ts").collectAsList();
    assertEquals(expected.size(), p.rows().size());
    for (int i = 0; i < expected.size(); i++) {
      Row r = p.rows().get(i);
      assertEquals(expected.get(i), RowFactory.create(r.get(0), r.get(1), r.get(2)), "keys and day of row " + i);
    }
    assertEquals(List.of("host", "ts", "day", "pc_1", "pc_2", "t2", "q", "flag_t2", "flag_q"),
        List.of(spark.read().parquet(dir.resolve("keys-out").toString()).select("host", "ts", "day", "pc_1",
            "pc_2", "t2", "q", "flag_t2", "flag_q").columns()));
    assertEquals(DataTypes.DateType, spark.read().parquet(dir.resolve("keys-out").toString()).schema()
        .apply("day").dataType());
  }

  private RunResult apply(String input, String keys, String out) {
    return JobRunner.run(spark, JobFiles.settings("input.path = \"" + input + "\"\nfeatures.keys = " + keys + "\n"
        + "apply.model = \"" + dir.resolve("fit") + "\"\noutput.report-sample = 60\noutput.path = \""
        + dir.resolve(out) + "\"\n"));
  }

  @Test
  void seriesIsTheMaximumAndTheCountsPerBucketOfTheWrittenScores() {
    RunResult r = apply(table("series", 3), "[host, ts]", "series-out");
    MonitorResult.Series s = r.monitor().series();
    assertTrue(s.buckets());
    Matcher m = Pattern.compile("ts \\(buckets of (\\d+) s\\)").matcher(s.positionLabel());
    assertTrue(m.matches(), s.positionLabel());
    long width = Long.parseLong(m.group(1));
    // brute force over the written scores: bucket = floor(seconds / width) * width, maxima per bucket
    Dataset<Row> scores = spark.read().parquet(dir.resolve("series-out/scores").toString());
    Column seconds = functions.col("ts").cast("long");
    List<Row> expected = scores.groupBy(functions.floor(seconds.divide(width)).multiply(width).as("at"))
        .agg(functions.max("t2"), functions.max("q"), functions.count("*"),
            functions.sum(functions.col("flag_t2").cast("long")), functions.sum(functions.col("flag_q").cast("long")))
        .orderBy("at").collectAsList();
    assertEquals(expected.size(), s.position().length);
    long flaggedQ = 0;
    for (int i = 0; i < expected.size(); i++) {
      assertEquals(expected.get(i).getLong(0), s.position()[i], 0.0, "bucket " + i);
      assertEquals(expected.get(i).getDouble(1), s.t2()[i], 0.0, "max T2 of bucket " + i);
      assertEquals(expected.get(i).getDouble(2), s.q()[i], 0.0, "max Q of bucket " + i);
      assertEquals(expected.get(i).getLong(3), s.rows()[i], "rows of bucket " + i);
      assertEquals(expected.get(i).getLong(4), s.flaggedT2()[i], "rows above the T2 limit in bucket " + i);
      assertEquals(expected.get(i).getLong(5), s.flaggedQ()[i], "rows above the Q limit in bucket " + i);
      flaggedQ += s.flaggedQ()[i];
    }
    assertEquals(r.monitor().flaggedQ(), flaggedQ, "the buckets hold every flagged row");
    assertTrue(flaggedQ > 0, "the table has rows off the model's plane");
    // the narrowest power-of-two width that fits in 600 buckets (brute force: the next narrower one does not)
    assertEquals(Long.bitCount(width), 1, "a power of two");
    assertTrue(expected.size() <= ScoringStage.SERIES_POINTS);
    long narrower = scores.select(functions.floor(seconds.divide(width / 2))).distinct().count();
    assertTrue(narrower > ScoringStage.SERIES_POINTS, "width " + width / 2 + " gives " + narrower + " buckets");
    assertEquals(64, width, "21,000 s of rows: 657 buckets of 32 s, 329 of 64 s");
  }

  /** Runs {@code body} with input splits of 16 KiB: every file is read in its own partitions, several empty. */
  private static <T> T split(java.util.function.Supplier<T> body) {
    spark.conf().set("spark.sql.files.maxPartitionBytes", "16384");
    spark.conf().set("spark.sql.files.openCostInBytes", "16384");
    try {
      return body.get();
    } finally {
      spark.conf().unset("spark.sql.files.maxPartitionBytes");
      spark.conf().unset("spark.sql.files.openCostInBytes");
    }
  }

  @Test
  void sampleAndRowSeriesDoNotDependOnThePartitioning() {
    String one = table("one-file", 1);
    String three = table("three-files", 3);
    assertEquals(2, spark.read().parquet(one).rdd().getNumPartitions(), "one file per day, a partition per file");
    RunResult a = apply(one, "[host, ts]", "sample-1");
    RunResult b = split(() -> {
      assertTrue(spark.read().parquet(three).rdd().getNumPartitions() >= 6, "several partitions per file");
      return apply(three, "[host, ts]", "sample-3");
    });
    assertEquals(60, a.sample().keyValues().size());
    assertEquals(a.monitor().series().positionLabel(), b.monitor().series().positionLabel());
    assertArrayEquals(a.monitor().series().t2(), b.monitor().series().t2(), 1e-12, "series maxima of T2");
    // counts are integer sums: exactly equal (no row's T2 or Q lies within rounding of a limit here)
    assertArrayEquals(a.monitor().series().rows(), b.monitor().series().rows(), "rows per bucket");
    assertArrayEquals(a.monitor().series().flaggedT2(), b.monitor().series().flaggedT2(), "T2 flags per bucket");
    assertArrayEquals(a.monitor().series().flaggedQ(), b.monitor().series().flaggedQ(), "Q flags per bucket");
    // the most unusual rows: their key columns by name (keys, then the partition column), times as ISO-8601
    assertEquals(List.of("host", "ts", "day"), a.monitor().topColumns());
    List<String> keys = a.monitor().top().get(0).keys();
    assertTrue(keys.get(1).matches("2026-11-0[23]T\\d\\d:\\d\\d:\\d\\dZ"), "an instant in UTC: " + keys);
    assertTrue(keys.get(2).matches("2026-11-0[23]"), "a date as a date: " + keys);
    assertEquals(keys.get(1).substring(0, 10), keys.get(2), "the day partition is the UTC date of ts: " + keys);
    assertEquals(a.sample().keyValues(), b.sample().keyValues(), "the same rows, in the same order");
    for (int i = 0; i < 60; i++) {
      // the same row scored in blocks of other rows: the dgemm kernels may round differently at another row count
      // (a few ulps of |score| <= 10)
      assertArrayEquals(a.sample().scores()[i], b.sample().scores()[i], 1e-12, "scores of sampled row " + i);
    }
    assertTrue(a.sample().keyValues().get(0).get(1).matches("2026-11-0[23] \\d\\d:\\d\\d:\\d\\d"),
        "a timestamp key as Spark casts it to text: " + a.sample().keyValues().get(0));
    // no time among the keys (nor a date partition column): the series is a sample of rows by the hash of their keys
    RunResult c = apply(table("one-file-flat", 1, false), "[host, seq]", "series-1");
    String flat = table("three-files-flat", 3, false);
    RunResult d = split(() -> apply(flat, "[host, seq]", "series-3"));
    MonitorResult.Series sc = c.monitor().series();
    assertEquals("row (seeded sample)", sc.positionLabel());
    assertEquals(ScoringStage.SERIES_POINTS, sc.t2().length);
    assertArrayEquals(sc.t2(), d.monitor().series().t2(), 1e-12, "T2 of the sampled rows");
    assertArrayEquals(sc.q(), d.monitor().series().q(), 1e-12, "Q of the sampled rows");
  }
}
