package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.math.BlockPrep;
import io.eigenmill.math.Moments;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.Set;
import java.util.TreeSet;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The keyed pass against unkeyed passes over filtered tables (its own reference: the claim is equality of bits, so
 * the check is exact), and the text of key values against Spark's own {@code CAST(x AS STRING)} (the outside
 * reference for the key texts).
 */
class KeyedPassTest extends SparkSuite {
  static final int D = 4;
  static final int BLOCK = 64;
  @TempDir static Path dir;
  static String path;

  @BeforeAll
  static void table() {
    // rows of 7 groups in random order (one group null), 3 dates as the partition column, 5 files
    Random rnd = new Random(41);
    StructType schema = new StructType().add("grp", DataTypes.StringType).add("x0", DataTypes.DoubleType)
        .add("x1", DataTypes.DoubleType).add("x2", DataTypes.DoubleType).add("x3", DataTypes.IntegerType)
        .add("day", DataTypes.StringType);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < 6000; i++) {
      int g = rnd.nextInt(7);
      String grp = g == 6 ? null : "g/" + g;
      double base = 1e6 * g;
      Double x2 = rnd.nextInt(50) == 0 ? null : rnd.nextGaussian() * 3 + g;
      rows.add(RowFactory.create(grp, base + rnd.nextGaussian(), rnd.nextGaussian() * (1 + g), x2,
          rnd.nextInt(1000), "2026-11-0" + (1 + rnd.nextInt(3))));
    }
    path = dir.resolve("t").toString();
    spark.createDataFrame(rows, schema).repartition(5).write().partitionBy("day").parquet(path);
  }

  private static KeyColumns keys(String... names) {
    Dataset<Row> t = spark.read().parquet(path);
    List<String> types = new ArrayList<>();
    for (String n : names) {
      types.add(t.schema().apply(n).dataType().simpleString());
    }
    return new KeyColumns(List.of(names), types, spark.conf().get("spark.sql.session.timeZone"));
  }

  @Test
  void eachKeyEqualsAnUnkeyedPassOverTheKeysRowsBitForBit() {
    Dataset<Row> t = spark.read().parquet(path);
    List<String> features = List.of("x0", "x1", "x2", "x3");
    FeatureInput input = new FeatureInput(t, features, BLOCK);
    assertTrue(input.columnar(), "the keyed pass is checked on the columnar path here");
    var result = input.runKeyed("test/keyed", new SummaryAggregator<>(Moments.factory(D, true)), ReadMode.DROP,
        BlockPrep.identity(), keys("grp"), BLOCK);
    assertEquals(7, result.byKey().size());
    long total = 0;
    for (Map.Entry<KeyValues, PartialResult<Moments>> e : result.byKey().entrySet()) {
      String g = e.getKey().get(0);
      Dataset<Row> only = g == null ? t.where("grp is null") : t.where(functions.col("grp").equalTo(g));
      PartialResult<Moments> alone = new FeatureInput(only, features, BLOCK).run("test/alone",
          Moments.factory(D, true), ReadMode.DROP, BlockPrep.identity());
      assertArrayEquals(alone.value().toBytes(), e.getValue().value().toBytes(), "group " + g);
      assertEquals(alone.counts().rowsRead(), e.getValue().counts().rowsRead());
      assertArrayEquals(alone.counts().missingCells(), e.getValue().counts().missingCells());
      total += e.getValue().counts().rowsRead();
    }
    assertEquals(6000, total);
    assertEquals(6000, result.total().rowsRead());
  }

  @Test
  void manyKeysHeldBackOverSeveralDrainsEqualTheRowReaderBitForBit(@TempDir Path tmp) {
    // one file, one partition: 500 keys mixed row by row, then a run of one key (whole batches of one key arrive
    // while mixed rows are held back), then mixed rows again; more rows than one scratch holds at d = 3
    // (KeyedPasses.scratchRows), so the scratch drains several times and blocks of BLOCK rows fill mid-drain
    int rowsHeld = KeyedPasses.scratchRows(3);
    Random rnd = new Random(43);
    StructType schema = new StructType().add("grp", DataTypes.IntegerType).add("x0", DataTypes.DoubleType)
        .add("x1", DataTypes.DoubleType).add("x2", DataTypes.DoubleType);
    List<Row> rows = new ArrayList<>();
    int mixed = rowsHeld + rowsHeld / 3;
    for (int i = 0; i < mixed + 9000 + rowsHeld; i++) {
      boolean run = i >= mixed && i < mixed + 9000;
      int g = run ? 7 : rnd.nextInt(500);
      Double x1 = rnd.nextInt(200) == 0 ? null : rnd.nextGaussian() * (1 + g % 5);
      rows.add(RowFactory.create(g, 1e3 * g + rnd.nextGaussian(), x1, rnd.nextGaussian() + g));
    }
    String one = tmp.resolve("one").toString();
    spark.createDataFrame(rows, schema).coalesce(1).write().parquet(one);
    List<String> features = List.of("x0", "x1", "x2");
    KeyColumns grp = new KeyColumns(List.of("grp"), List.of("int"), spark.conf().get("spark.sql.session.timeZone"));
    var held = columnarEqualsRowReader(one, features, grp, 500);
    // and the run's key against an unkeyed pass over its rows alone
    PartialResult<Moments> alone = new FeatureInput(spark.read().parquet(one).where("grp = 7"), features, BLOCK)
        .run("test/held-alone", Moments.factory(3, true), ReadMode.DROP, BlockPrep.identity());
    assertArrayEquals(alone.value().toBytes(), held.byKey().get(new KeyValues(List.of("7"))).value().toBytes());
  }

  /**
   * The keyed pass over the columnar batches of the table at {@code path} against the row reader (Spark's vectorized
   * Parquet reader off: rows copied one by one into the same blocks): the same keys ({@code keys} of them), and per
   * key the same summary bit for bit, the same missing cells and dropped rows. Returns the columnar result.
   */
  private static FeatureInput.KeyedResult<Moments> columnarEqualsRowReader(String path, List<String> features,
      KeyColumns grp, int keys) {
    int d = features.size();
    FeatureInput columnar = new FeatureInput(spark.read().parquet(path), features, BLOCK);
    assertTrue(columnar.columnar());
    var byBatch = columnar.runKeyed("test/batches", new SummaryAggregator<>(Moments.factory(d, true)),
        ReadMode.DROP, BlockPrep.identity(), grp, BLOCK);
    assertEquals(keys, byBatch.byKey().size());
    spark.conf().set("spark.sql.parquet.enableVectorizedReader", "false");
    try {
      FeatureInput rowInput = new FeatureInput(spark.read().parquet(path), features, BLOCK);
      assertTrue(!rowInput.columnar());
      var byRow = rowInput.runKeyed("test/rows", new SummaryAggregator<>(Moments.factory(d, true)),
          ReadMode.DROP, BlockPrep.identity(), grp, BLOCK);
      assertEquals(byRow.byKey().keySet(), byBatch.byKey().keySet());
      for (KeyValues k : byBatch.byKey().keySet()) {
        assertArrayEquals(byRow.byKey().get(k).value().toBytes(), byBatch.byKey().get(k).value().toBytes(),
            "group " + k);
        assertArrayEquals(byRow.byKey().get(k).counts().missingCells(),
            byBatch.byKey().get(k).counts().missingCells(), "group " + k);
        assertEquals(byRow.byKey().get(k).counts().rowsDropped(), byBatch.byKey().get(k).counts().rowsDropped(),
            "group " + k);
      }
    } finally {
      spark.conf().unset("spark.sql.parquet.enableVectorizedReader");
    }
    return byBatch;
  }

  @Test
  void fewKeysInWholeBatchesEqualTheRowReaderAndFilteredPassesBitForBit(@TempDir Path tmp) {
    // one file, one partition, 5 keys mixed row by row over more than three reader batches (4,096 rows): with few
    // keys a whole batch fills the scratch and is handed out before the next batch; NaN and infinities in x0, nulls
    // in x1, an int column x2; then a short last batch
    Random rnd = new Random(47);
    StructType schema = new StructType().add("grp", DataTypes.StringType).add("x0", DataTypes.DoubleType)
        .add("x1", DataTypes.DoubleType).add("x2", DataTypes.IntegerType);
    List<Row> rows = new ArrayList<>();
    double[] odd = {Double.NaN, Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY};
    for (int i = 0; i < 3 * 4096 + 1500; i++) {
      int g = rnd.nextInt(5);
      double x0 = rnd.nextInt(150) == 0 ? odd[rnd.nextInt(3)] : 1e4 * g + rnd.nextGaussian();
      Double x1 = rnd.nextInt(120) == 0 ? null : rnd.nextGaussian() * (1 + g);
      rows.add(RowFactory.create("k" + g, x0, x1, rnd.nextInt(1000) - 500 * g));
    }
    String one = tmp.resolve("few").toString();
    spark.createDataFrame(rows, schema).coalesce(1).write().parquet(one);
    List<String> features = List.of("x0", "x1", "x2");
    KeyColumns grp = new KeyColumns(List.of("grp"), List.of("string"),
        spark.conf().get("spark.sql.session.timeZone"));
    var keyed = columnarEqualsRowReader(one, features, grp, 5);
    long missing = 0;
    for (int g = 0; g < 5; g++) {
      PartialResult<Moments> alone = new FeatureInput(spark.read().parquet(one).where("grp = 'k" + g + "'"),
          features, BLOCK).run("test/few-alone", Moments.factory(3, true), ReadMode.DROP, BlockPrep.identity());
      PartialResult<Moments> part = keyed.byKey().get(new KeyValues(List.of("k" + g)));
      assertArrayEquals(alone.value().toBytes(), part.value().toBytes(), "group k" + g);
      assertArrayEquals(alone.counts().missingCells(), part.counts().missingCells(), "group k" + g);
      missing += part.counts().missingCells()[0];
    }
    assertTrue(missing > 0, "x0 has NaN and infinite cells");
  }

  @Test
  void twoKeyColumnsAndThePartitionColumnRowPathAgreesWithColumnarPath() {
    Dataset<Row> t = spark.read().parquet(path);
    List<String> features = List.of("x0", "x1", "x2", "x3");
    var columnar = new FeatureInput(t, features, BLOCK).runKeyed("test/keyed2",
        new SummaryAggregator<>(Moments.factory(D, true)), ReadMode.DROP, BlockPrep.identity(),
        keys("day", "grp"), BLOCK);
    // the same rows as a local relation: no columnar scan, the row reader
    Dataset<Row> local = spark.createDataFrame(t.collectAsList(), t.schema());
    FeatureInput rowInput = new FeatureInput(local, features, BLOCK);
    assertTrue(!rowInput.columnar());
    var rows = rowInput.runKeyed("test/keyed2-rows", new SummaryAggregator<>(Moments.factory(D, true)),
        ReadMode.DROP, BlockPrep.identity(), keys("day", "grp"), BLOCK);
    assertEquals(21, columnar.byKey().size());
    assertEquals(columnar.byKey().keySet(), rows.byKey().keySet());
    for (KeyValues k : columnar.byKey().keySet()) {
      Moments a = columnar.byKey().get(k).value();
      Moments b = rows.byKey().get(k).value();
      assertEquals(a.count(), b.count());
      // different partitions (rows in another order): equal within rounding, relative to the co-moments
      double[] ca = a.covariance();
      double[] cb = b.covariance();
      for (int i = 0; i < ca.length; i++) {
        assertEquals(ca[i], cb[i], 1e-9 * (Math.abs(ca[i]) + 1), k + " cell " + i);
      }
    }
  }

  @Test
  void keyTextsAreWhatSparksCastToStringGives() {
    StructType schema = new StructType().add("s", DataTypes.StringType).add("b", DataTypes.BooleanType)
        .add("t8", DataTypes.ByteType).add("t16", DataTypes.ShortType).add("i", DataTypes.IntegerType)
        .add("l", DataTypes.LongType).add("dt", DataTypes.DateType).add("ts", DataTypes.TimestampType)
        .add("dec", DataTypes.createDecimalType(12, 3)).add("f", DataTypes.FloatType)
        .add("db", DataTypes.DoubleType).add("x", DataTypes.DoubleType);
    List<Row> rows = new ArrayList<>();
    Random rnd = new Random(3);
    for (int i = 0; i < 300; i++) {
      rows.add(RowFactory.create(i % 11 == 0 ? null : "é/" + (i % 9) + " =,", i % 2 == 0, (byte) (i % 5 - 2),
          (short) (i % 7 * 1000), i % 13 - 6, (long) (i % 4) * 10_000_000_000L,
          java.sql.Date.valueOf(java.time.LocalDate.of(2026, 1 + i % 12, 1 + i % 28)),
          java.sql.Timestamp.from(java.time.Instant.ofEpochSecond(1_790_000_000L + i * 3607L, (i % 3) * 120_000_000L)),
          new java.math.BigDecimal(java.math.BigInteger.valueOf(i * 1234L - 50_000L), 3),
          i % 6 == 0 ? -0.0f : (float) (i % 6) / 3f, i % 5 == 0 ? 0.0 : 1e-7 * (i % 5) + 1e10 * (i % 2),
          rnd.nextGaussian()));
    }
    String p = dir.resolve("types").toString();
    spark.createDataFrame(rows, schema).repartition(3).write().parquet(p);
    Dataset<Row> t = spark.read().parquet(p);
    for (String c : List.of("s", "b", "t8", "t16", "i", "l", "dt", "ts", "dec", "f", "db")) {
      var result = new FeatureInput(t, List.of("x"), BLOCK).runKeyed("test/types",
          new SummaryAggregator<>(Moments.factory(1, false)), ReadMode.DROP, BlockPrep.identity(), keyOf(p, c),
          BLOCK);
      assertTrue(result.columnar());
      Set<String> ours = new TreeSet<>(java.util.Comparator.nullsFirst(String::compareTo));
      result.byKey().keySet().forEach(k -> ours.add(k.get(0)));
      Set<String> sparks = new TreeSet<>(java.util.Comparator.nullsFirst(String::compareTo));
      // Spark groups -0.0 with 0.0 and names the group 0.0; so do we
      for (Row r : t.select(functions.col(c).cast("string")).distinct().collectAsList()) {
        sparks.add("-0.0".equals(r.getString(0)) ? "0.0" : r.getString(0));
      }
      assertEquals(sparks, ours, "column " + c);
      Set<String> back = new HashSet<>();
      for (String s : ours) {
        back.add(s);
      }
      assertEquals(ours.size(), back.size());
    }
  }

  private static KeyColumns keyOf(String table, String name) {
    String type = spark.read().parquet(table).schema().apply(name).dataType().simpleString();
    return new KeyColumns(List.of(name), List.of(type), spark.conf().get("spark.sql.session.timeZone"));
  }

  @Test
  void aKeyedPassOverATableWithoutRowsHasNoKeys() throws Exception {
    String p = Files.createDirectories(dir.resolve("empty")).resolve("t").toString();
    spark.read().parquet(path).where("false").write().parquet(p);
    var result = new FeatureInput(spark.read().parquet(p), List.of("x0"), BLOCK).runKeyed("test/empty",
        new SummaryAggregator<>(Moments.factory(1, true)), ReadMode.DROP, BlockPrep.identity(), keys("grp"), BLOCK);
    assertTrue(result.byKey().isEmpty());
    assertEquals(0, result.total().rowsRead());
  }

  @Test
  void theKeyCountsAreSparksGroupCountsAndTheKeysThePassMeets() {
    // outside reference: Spark's own groupBy(...).count(), the key texts through CAST(x AS STRING); the partition
    // column alone (a scan with no data column) and with a data column
    Dataset<Row> t = spark.read().parquet(path);
    FeatureInput input = new FeatureInput(t, List.of("x0", "x1", "x2", "x3"), BLOCK);
    for (String[] names : List.of(new String[] {"grp"}, new String[] {"day"}, new String[] {"day", "grp"},
        new String[] {"x3"})) {
      KeyColumns k = keys(names);
      Map<KeyValues, Long> counts = input.countKeys(k);
      assertTrue(counts != null, "columnar key count for " + List.of(names));
      Map<KeyValues, Long> expected = new java.util.HashMap<>();
      org.apache.spark.sql.Column[] cols = new org.apache.spark.sql.Column[names.length];
      for (int c = 0; c < names.length; c++) {
        cols[c] = functions.col(names[c]).cast("string");
      }
      for (Row r : t.groupBy(cols).count().collectAsList()) {
        List<String> texts = new ArrayList<>();
        for (int c = 0; c < names.length; c++) {
          texts.add(r.isNullAt(c) ? null : r.getString(c));
        }
        expected.put(new KeyValues(texts), r.getLong(names.length));
      }
      assertEquals(expected, new java.util.HashMap<>(counts), "counts per key of " + List.of(names));
      if (names.length == 2) {
        var pass = input.runKeyed("test/keyed", new SummaryAggregator<>(Moments.factory(D, true)), ReadMode.DROP,
            BlockPrep.identity(), k, BLOCK);
        assertEquals(counts.keySet(), pass.byKey().keySet(), "the keys the pass meets");
        pass.byKey().forEach((key, p) -> assertEquals(counts.get(key), p.counts().rowsRead(), "rows of " + key));
      }
    }
  }
}
