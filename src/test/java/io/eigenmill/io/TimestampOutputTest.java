package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.run.JobRunner;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.time.LocalDate;
import java.time.LocalDateTime;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.stream.Stream;
import org.apache.hadoop.conf.Configuration;
import org.apache.parquet.example.data.Group;
import org.apache.parquet.hadoop.ParquetFileReader;
import org.apache.parquet.hadoop.ParquetReader;
import org.apache.parquet.hadoop.example.GroupReadSupport;
import org.apache.parquet.hadoop.util.HadoopInputFile;
import org.apache.parquet.schema.LogicalTypeAnnotation;
import org.apache.parquet.schema.MessageType;
import org.apache.parquet.schema.PrimitiveType.PrimitiveTypeName;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Key timestamps keep their meaning in every row output (scores, reconstruction, cluster assignments): read with
 * parquet-hadoop's own API (no Spark), a {@code timestamp} key is Parquet TIMESTAMP(isAdjustedToUTC = true, MICROS)
 * holding the input's epoch microseconds, a {@code timestamp_ntz} key TIMESTAMP(isAdjustedToUTC = false, MICROS)
 * and a {@code date} key DATE; and the scores join back to the input row for row in session time zones other than
 * UTC.
 *
 * <p>Outside reference: Apache Parquet format, LogicalTypes.md (TIMESTAMP: "isAdjustedToUTC = true" stores
 * microseconds since the Unix epoch, 1970-01-01T00:00:00Z, of the instant; "isAdjustedToUTC = false" the
 * microseconds of the local date-time since 1970-01-01T00:00:00; DATE: INT32 days since the Unix epoch).
 */
class TimestampOutputTest extends SparkSuite {
  private static final int ROWS = 240;
  /** 2026-11-01T07:30:00.123457Z (microseconds since the epoch, computed with Python's datetime). */
  private static final long START_MICROS = 1_793_518_200_123_457L;
  /**
   * One minute and 7 microseconds between rows: 240 rows span 07:30Z to 11:34Z, which holds Los Angeles's repeated
   * hour (01:00 to 02:00 local time twice, 08:00Z to 10:00Z, when daylight saving time ends that day): two instants
   * an hour apart show the same local wall-clock time there.
   */
  private static final long STEP_MICROS = 61_000_007L;
  private static final long MICROS_PER_DAY = 86_400_000_000L;

  private static Path dir;
  private static Path input;
  private static Path out;
  private static String callerSettingBefore;

  /** The epoch microseconds of row {@code id}'s {@code ts} (and the local microseconds of its {@code ts_local}). */
  private static long micros(long id) {
    return START_MICROS + id * STEP_MICROS;
  }

  @BeforeAll
  static void fitWithTimestampKeys() throws Exception {
    dir = Files.createTempDirectory("eigenmill-timestamps");
    input = dir.resolve("input");
    out = dir.resolve("fit");
    StructType schema = new StructType().add("id", DataTypes.LongType, false)
        .add("host", DataTypes.StringType, false).add("ts", DataTypes.TimestampType, false)
        .add("ts_local", DataTypes.TimestampNTZType, false).add("day", DataTypes.DateType, false)
        .add("f1", DataTypes.DoubleType, false).add("f2", DataTypes.DoubleType, false)
        .add("f3", DataTypes.DoubleType, false).add("f4", DataTypes.DoubleType, false);
    Random random = new Random(11);
    List<Row> rows = new ArrayList<>();
    for (long id = 0; id < ROWS; id++) {
      long us = micros(id);
      long seconds = Math.floorDiv(us, 1_000_000L);
      int nanos = (int) Math.floorMod(us, 1_000_000L) * 1000;
      double a = random.nextGaussian();
      double b = random.nextGaussian();
      rows.add(RowFactory.create(id, "edge-" + (id % 7), Instant.ofEpochSecond(seconds, nanos),
          LocalDateTime.ofEpochSecond(seconds, nanos, ZoneOffset.UTC),
          LocalDate.ofEpochDay(Math.floorDiv(us, MICROS_PER_DAY)), 3 * a + 0.1 * random.nextGaussian(),
          2 * a - b + 0.1 * random.nextGaussian(), b + 0.1 * random.nextGaussian(), 0.5 * random.nextGaussian()));
    }
    spark.createDataFrame(rows, schema).repartition(3).write().parquet(input.toString());
    callerSettingBefore = spark.conf().get(WriterSession.TIMESTAMP_TYPE);
    JobRunner.run(spark, JobFiles.settings("input.path = \"" + input + "\"\n"
        + "features.keys = [id, host, ts, ts_local, day]\nreduce.components = 2\noutput.scores = true\n"
        + "output.reconstruction = true\ncluster { enabled = true, k = 2, restarts = 1 }\n"
        + "output.path = \"" + out + "\"\n"));
  }

  @Test
  void keyColumnsCarryParquetTimestampAndDateTypes() throws Exception {
    for (String table : List.of("scores", "reconstruction", "clusters/assignments")) {
      List<Path> files = partFiles(out.resolve(table));
      assertFalse(files.isEmpty(), table);
      for (Path file : files) {
        MessageType schema = footerSchema(file);
        // Apache Parquet format, LogicalTypes.md: TIMESTAMP(isAdjustedToUTC, unit) annotates INT64; DATE INT32
        assertEquals(PrimitiveTypeName.INT64, schema.getType("ts").asPrimitiveType().getPrimitiveTypeName(),
            table + " " + file);
        assertEquals(LogicalTypeAnnotation.timestampType(true, LogicalTypeAnnotation.TimeUnit.MICROS),
            schema.getType("ts").getLogicalTypeAnnotation(), table + " " + file);
        assertEquals(PrimitiveTypeName.INT64, schema.getType("ts_local").asPrimitiveType().getPrimitiveTypeName(),
            table + " " + file);
        assertEquals(LogicalTypeAnnotation.timestampType(false, LogicalTypeAnnotation.TimeUnit.MICROS),
            schema.getType("ts_local").getLogicalTypeAnnotation(), table + " " + file);
        assertEquals(PrimitiveTypeName.INT32, schema.getType("day").asPrimitiveType().getPrimitiveTypeName(),
            table + " " + file);
        assertEquals(LogicalTypeAnnotation.dateType(), schema.getType("day").getLogicalTypeAnnotation(),
            table + " " + file);
      }
    }
  }

  @Test
  void nonSparkReaderSeesTheInputsEpochMicros() throws Exception {
    Map<Long, Integer> seen = new HashMap<>();
    for (Path file : partFiles(out.resolve("scores"))) {
      try (ParquetReader<Group> reader = ParquetReader.builder(new GroupReadSupport(),
          new org.apache.hadoop.fs.Path(file.toUri())).withConf(new Configuration()).build()) {
        for (Group g = reader.read(); g != null; g = reader.read()) {
          long id = g.getLong("id", 0);
          seen.merge(id, 1, Integer::sum);
          // brute force in the test: the values the input was built from (exact integers, no tolerance)
          assertEquals(micros(id), g.getLong("ts", 0), "ts of row " + id);
          assertEquals(micros(id), g.getLong("ts_local", 0), "ts_local of row " + id);
          assertEquals(Math.floorDiv(micros(id), MICROS_PER_DAY), g.getInteger("day", 0), "day of row " + id);
        }
      }
    }
    assertEquals(ROWS, seen.size(), "every input row is scored once");
    assertTrue(seen.values().stream().allMatch(c -> c == 1), seen.toString());
  }

  @Test
  void scoresJoinBackRowForRowInOtherTimeZones() {
    for (String zone : List.of("America/Los_Angeles", "Asia/Kolkata")) {
      spark.conf().set("spark.sql.session.timeZone", zone);
      try {
        Dataset<Row> in = spark.read().parquet(input.toString()).select("id", "ts", "ts_local", "day");
        Dataset<Row> scores = spark.read().parquet(out.resolve("scores").toString())
            .selectExpr("id AS scored_id", "ts AS s_ts", "ts_local AS s_local", "day AS s_day");
        for (String key : List.of("ts", "ts_local")) {
          String other = key.equals("ts") ? "s_ts" : "s_local";
          Dataset<Row> joined = in.join(scores, in.col(key).equalTo(scores.col(other)));
          // every input row pairs with exactly its own scores row (the ids were passed through as a key)
          assertEquals(ROWS, joined.count(), zone + " " + key);
          assertEquals(0, joined.filter("id <> scored_id OR day <> s_day").count(), zone + " " + key);
        }
      } finally {
        spark.conf().set("spark.sql.session.timeZone", "UTC");
      }
    }
  }

  @Test
  void theCallersSessionKeepsItsOwnSetting() {
    // the run wrote through a copy of the session: the caller's value is what it was before the run
    assertEquals(callerSettingBefore, spark.conf().get(WriterSession.TIMESTAMP_TYPE));
    assertFalse(WriterSession.MICROS.equals(callerSettingBefore), "the test session starts on Spark's default");
  }

  private static List<Path> partFiles(Path folder) throws IOException {
    try (Stream<Path> walk = Files.walk(folder)) {
      return walk.filter(p -> p.getFileName().toString().endsWith(".parquet")).sorted().toList();
    }
  }

  private static MessageType footerSchema(Path file) throws IOException {
    try (ParquetFileReader reader = ParquetFileReader.open(HadoopInputFile.fromPath(
        new org.apache.hadoop.fs.Path(file.toUri()), new Configuration()))) {
      return reader.getFooter().getFileMetaData().getSchema();
    }
  }
}
