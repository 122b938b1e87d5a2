package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.settings.Choices.OutputMode;
import io.eigenmill.testing.JobFiles;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.stream.Stream;
import org.apache.hadoop.conf.Configuration;
import org.apache.parquet.hadoop.ParquetFileReader;
import org.apache.parquet.hadoop.metadata.ParquetMetadata;
import org.apache.parquet.hadoop.util.HadoopInputFile;
import org.apache.spark.scheduler.SparkListener;
import org.apache.spark.scheduler.SparkListenerJobStart;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.Metadata;
import org.apache.spark.sql.types.MetadataBuilder;
import org.apache.spark.sql.types.StructType;
import io.eigenmill.testing.SparkSuite;
import org.junit.jupiter.api.Test;

/**
 * Small tables written from the driver read back as Spark's own writer ({@code coalesce(1).write().parquet}, the
 * outside reference) writes them: the same Spark schema (types, nullability as read, column metadata), the same
 * Parquet schema and Spark schema in the footer, the same rows in the same order, doubles bit for bit (NaN, -0.0,
 * infinities, subnormals); and no Spark job runs to write them.
 */
class DriverTablesTest extends SparkSuite {
  private static final double[] AWKWARD = {0.0, -0.0, Double.NaN, Double.POSITIVE_INFINITY,
      Double.NEGATIVE_INFINITY, Double.MIN_VALUE, Double.MAX_VALUE, -1.0 / 3.0, Math.PI * 1e-300, 1e17 + 1};

  /** A model row (the schema of {@link ModelStore}): nested arrays, strings, int, long, boolean, double. */
  @Test
  void modelTableAsSparkWritesIt() throws IOException {
    Row model = RowFactory.create(3, "9.9.9", new String[] {"a", "b ü", ""}, new String[] {"double", "int", "long"},
        "standardize", "covariance", 5_000_000_000L, AWKWARD, new double[] {1, 2, 3}, 2,
        new double[][] {AWKWARD, new double[0]}, new double[] {2.5, -0.0}, true, Double.MIN_NORMAL, "fp", AWKWARD);
    compare("model", ModelStore.SCHEMA, List.of(model));
  }

  /** Loadings and spectrum of a fit: string, int, double and boolean columns, many rows in a fixed order. */
  @Test
  void componentAndSpectrumTablesAsSparkWritesThem() throws IOException {
    StructType components = new StructType().add("feature", DataTypes.StringType, false)
        .add("component", DataTypes.IntegerType, false).add("loading", DataTypes.DoubleType, false);
    StructType spectrum = new StructType().add("component", DataTypes.IntegerType, false)
        .add("eigenvalue", DataTypes.DoubleType, false).add("kept", DataTypes.BooleanType, false);
    List<Row> loadings = new ArrayList<>();
    List<Row> eigen = new ArrayList<>();
    java.util.Random random = new java.util.Random(20261204L);
    for (int i = 0; i < 3000; i++) {
      loadings.add(RowFactory.create("f" + (2999 - i), i % 7, i < AWKWARD.length ? AWKWARD[i] : random.nextGaussian()));
      eigen.add(RowFactory.create(i + 1, random.nextDouble() * Math.pow(10, i % 40 - 20), i % 3 == 0));
    }
    compare("components", components, loadings);
    compare("spectrum", spectrum, eigen);
    compare("empty", spectrum, List.of());
  }

  /** The drift table: nullable columns with nulls. */
  @Test
  void nullableColumnsAsSparkWritesThem() throws IOException {
    StructType schema = new StructType().add("measure", DataTypes.StringType, false)
        .add("index", DataTypes.IntegerType, true).add("feature", DataTypes.StringType, true)
        .add("value", DataTypes.DoubleType, true).add("sizes", DataTypes.createArrayType(DataTypes.LongType), true);
    compare("drift", schema, List.of(RowFactory.create("angle", 1, null, 12.5, null),
        RowFactory.create("shift", null, "cpu", null, new long[] {1L, Long.MIN_VALUE}),
        RowFactory.create("share", 2, null, Double.NaN, new long[0])));
  }

  /**
   * Data frames held by the driver (centroids with column metadata; a group table whose text columns are cast to
   * date, timestamp and long, as {@link ModelStore#groupTable} does) are written from the driver, equal to Spark's.
   */
  @Test
  void driverFramesAsSparkWritesThem() throws IOException {
    Metadata kind = new MetadataBuilder().putString("eigenmill.entity", "host").putBoolean("eigenmill.spread", true)
        .build();
    StructType schema = new StructType().add("cluster", DataTypes.IntegerType, false, kind)
        .add("c_1", DataTypes.DoubleType, false);
    Dataset<Row> centroids = spark.createDataFrame(List.of(RowFactory.create(0, -0.0),
        RowFactory.create(1, Double.NaN), RowFactory.create(2, 1e-310)), schema).coalesce(1);
    compareFrame("centroids", centroids);
    StructType texts = new StructType().add("day", DataTypes.StringType, true).add("at", DataTypes.StringType, true)
        .add("n", DataTypes.StringType, true).add("x", DataTypes.DoubleType, false);
    Dataset<Row> groups = spark.createDataFrame(List.of(RowFactory.create("2026-03-29", "2026-03-29 02:30:00.123456",
        "9007199254740993", 1.5), RowFactory.create(null, null, null, -0.0)), texts).select(
        functions.col("day").cast("date").as("day"), functions.col("at").cast("timestamp").as("at"),
        functions.col("n").cast("long").as("n"), functions.col("x"));
    compareFrame("groups", groups);
  }

  @Test
  void noSparkJobWritesTheSmallTables() throws Exception {
    AtomicInteger jobs = new AtomicInteger();
    SparkListener counter = new SparkListener() {
      @Override
      public void onJobStart(SparkListenerJobStart start) {
        jobs.incrementAndGet();
      }
    };
    Path dir = JobFiles.scratch("driver-tables-jobs");
    StructType schema = new StructType().add("component", DataTypes.IntegerType, false)
        .add("eigenvalue", DataTypes.DoubleType, false);
    List<Row> rows = List.of(RowFactory.create(1, 2.0), RowFactory.create(2, 1.0));
    Dataset<Row> frame = spark.createDataFrame(rows, schema).coalesce(1);
    spark.sparkContext().addSparkListener(counter);
    try {
      DriverTables.write(spark, schema, rows, dir.resolve("rows").toString());
      DriverTables.write(spark, frame, dir.resolve("frame").toString());
      spark.sparkContext().listenerBus().waitUntilEmpty();
      assertEquals(0, jobs.get(), "Spark jobs while writing two small tables from the driver");
      // the listener does see jobs: Spark's own writer of the same table runs one
      frame.write().parquet(dir.resolve("spark").toString());
      spark.sparkContext().listenerBus().waitUntilEmpty();
      assertTrue(jobs.get() >= 1, "Spark's writer ran " + jobs.get() + " jobs; the listener must count them");
    } finally {
      spark.sparkContext().removeSparkListener(counter);
    }
  }

  /** A run that fails after its small tables are staged publishes nothing: the staging folder goes, no output. */
  @Test
  void stagedTablesAreNotPublishedOnAbort() throws IOException {
    Path target = JobFiles.scratch("driver-tables-abort").resolve("out");
    OutputCommit out = OutputCommit.begin(spark, target.toString(), OutputMode.FAIL_IF_EXISTS);
    StructType schema = new StructType().add("component", DataTypes.IntegerType, false);
    DriverTables.write(spark, schema, List.of(RowFactory.create(1)), out.staged("spectrum"));
    assertTrue(Files.exists(Path.of(java.net.URI.create(out.staged("spectrum")))), "staged table");
    out.abort();
    assertFalse(Files.exists(target), "output.path after an aborted run");
    try (Stream<Path> left = Files.list(target.getParent())) {
      assertEquals(List.of(), left.toList(), "nothing beside output.path after an aborted run");
    }
  }

  private void compare(String name, StructType schema, List<Row> rows) throws IOException {
    Path dir = JobFiles.scratch("driver-tables");
    String ours = dir.resolve(name + "-driver").toString();
    String theirs = dir.resolve(name + "-spark").toString();
    DriverTables.write(spark, schema, rows, ours);
    spark.createDataFrame(rows, schema).coalesce(1).write().parquet(theirs);
    same(ours, theirs);
  }

  private void compareFrame(String name, Dataset<Row> frame) throws IOException {
    assertNotNull(DriverTables.localRows(frame), name + ": rows held by the driver (written without a job)");
    Path dir = JobFiles.scratch("driver-tables");
    String ours = dir.resolve(name + "-driver").toString();
    String theirs = dir.resolve(name + "-spark").toString();
    DriverTables.write(spark, frame, ours);
    frame.coalesce(1).write().parquet(theirs);
    same(ours, theirs);
  }

  private void same(String ours, String theirs) throws IOException {
    Dataset<Row> a = spark.read().parquet(ours);
    Dataset<Row> b = spark.read().parquet(theirs);
    assertEquals(b.schema(), a.schema(), "schema read back");
    assertEquals(canon(b.collectAsList()), canon(a.collectAsList()), "rows read back, in order");
    ParquetMetadata fa = footer(ours);
    ParquetMetadata fb = footer(theirs);
    assertEquals(fb.getFileMetaData().getSchema(), fa.getFileMetaData().getSchema(), "Parquet schema");
    String key = "org.apache.spark.sql.parquet.row.metadata";
    assertEquals(fb.getFileMetaData().getKeyValueMetaData().get(key),
        fa.getFileMetaData().getKeyValueMetaData().get(key), "Spark schema in the footer");
    assertTrue(Files.exists(Path.of(ours, "_SUCCESS")), "success marker");
  }

  private static ParquetMetadata footer(String folder) throws IOException {
    Path file;
    try (Stream<Path> files = Files.list(Path.of(folder))) {
      List<Path> parts = files.filter(p -> p.getFileName().toString().endsWith(".parquet")).toList();
      assertEquals(1, parts.size(), "one Parquet file in " + folder);
      file = parts.get(0);
    }
    try (ParquetFileReader r = ParquetFileReader.open(HadoopInputFile.fromPath(
        new org.apache.hadoop.fs.Path(file.toString()), new Configuration()))) {
      return r.getFooter();
    }
  }

  /** Values as text, doubles by their bits, so that NaN, -0.0 and every last bit count. */
  private static String canon(Object v) {
    if (v instanceof Double d) {
      return "d" + Long.toHexString(Double.doubleToRawLongBits(d));
    }
    if (v instanceof Row r) {
      List<String> out = new ArrayList<>();
      for (int i = 0; i < r.length(); i++) {
        out.add(canon(r.get(i)));
      }
      return out.toString();
    }
    if (v instanceof List<?> list) {
      List<String> out = new ArrayList<>();
      for (Object o : list) {
        out.add(canon(o));
      }
      return out.toString();
    }
    if (v instanceof scala.collection.Seq<?> seq) {
      return canon(scala.collection.JavaConverters.seqAsJavaList(seq));
    }
    return v == null ? "null" : v.getClass().getSimpleName() + ":" + v;
  }
}
