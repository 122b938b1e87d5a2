package io.eigenmill.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Bad input, each case through the command line: exit code 2, the exact message, and nothing under output.path.
 * The messages are the product's own contract (README, "Command line": one line per problem naming the setting or
 * column, the value and the rule).
 */
class BadInputCorpusTest extends SparkSuite {
  private static Path dir;
  private static final StructType SCHEMA = new StructType().add("host", DataTypes.StringType)
      .add("cpu", DataTypes.DoubleType).add("mem", DataTypes.DoubleType).add("fan", DataTypes.DoubleType);

  @BeforeAll
  static void folder() throws Exception {
    dir = Files.createTempDirectory("eigenmill-bad");
  }

  private static Path table(String name, List<Row> rows) {
    Path p = dir.resolve(name);
    spark.createDataFrame(rows, SCHEMA).write().parquet(p.toString());
    return p;
  }

  private static List<Row> healthy(int n) {
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < n; i++) {
      rows.add(RowFactory.create("h" + i, 10.0 + i % 7, 40.0 + (i * 3) % 11, 3000.0 + (i * 7) % 13));
    }
    return rows;
  }

  private record Result(int code, String out, String err, Path output) {}

  private static Result run(String name, Path input, String extra) throws Exception {
    Path output = dir.resolve("out-" + name);
    Path job = dir.resolve(name + ".conf");
    Files.writeString(job, "input.path = \"" + input + "\"\nfeatures.keys = [host]\noutput.path = \"" + output
        + "\"\n" + extra);
    CommandRun r = CommandRun.of("run", job.toString());
    return new Result(r.code(), r.out(), r.err(), output);
  }

  private static void rejected(Result r, String message) {
    assertEquals(2, r.code(), r.err());
    assertEquals("eigenmill: error: " + message + "\n", r.err());
    assertTrue(Files.notExists(r.output()), "nothing written");
  }

  @Test
  void missingInputPath() throws Exception {
    Path nowhere = dir.resolve("nowhere");
    rejected(run("missing", nowhere, ""), "input.path = " + nowhere + ": no such file or folder");
  }

  @Test
  void emptyTable() throws Exception {
    Path t = table("empty", List.of());
    rejected(run("empty", t, ""), "input.path = " + t + ": the table has no rows");
  }

  @Test
  void noRowsLeftAfterTheMissingValuePolicy() throws Exception {
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < 20; i++) {
      rows.add(RowFactory.create("h" + i, i % 2 == 0 ? null : 1.0 + i, i % 2 == 0 ? 2.0 + i : null, 3.0));
    }
    Path t = table("gaps", rows);
    rejected(run("gaps", t, ""), "prepare.missing = drop-rows: no rows left: all 20 rows have a missing value"
        + " (cpu: 10 cells, mem: 10 cells)");
  }

  @Test
  void allNullColumnCannotBeImputed() throws Exception {
    List<Row> rows = new ArrayList<>();
    for (Row r : healthy(30)) {
      rows.add(RowFactory.create(r.get(0), r.get(1), r.get(2), null));
    }
    Path t = table("all-null", rows);
    rejected(run("all-null", t, "prepare.missing = impute-mean\n"), "features.columns: column fan holds no value at"
        + " all (every cell null, NaN or infinite); prepare.missing = impute-mean cannot fill them: exclude them with"
        + " features.exclude");
  }

  @Test
  void nanOrInfinityIsMissingAndFailsUnderFail() throws Exception {
    List<Row> rows = new ArrayList<>(healthy(30));
    rows.set(3, RowFactory.create("h3", Double.NaN, 1.0, 2.0));
    rows.set(7, RowFactory.create("h7", 4.0, Double.POSITIVE_INFINITY, 2.0));
    Path t = table("nan", rows);
    rejected(run("nan", t, "prepare.missing = fail\n"), "prepare.missing = fail: the input has missing values (null,"
        + " NaN or infinite): cpu: 1 cells, mem: 1 cells; set prepare.missing = drop-rows or impute-mean");
    Result dropped = run("nan-drop", t, "");
    assertEquals(0, dropped.code(), dropped.err());
    assertTrue(dropped.out().contains("fit: 28 rows (2 dropped)"), dropped.out());
  }

  @Test
  void constantColumnIsDroppedWithAWarningAndAllConstantIsAnError() throws Exception {
    List<Row> rows = new ArrayList<>();
    for (Row r : healthy(30)) {
      rows.add(RowFactory.create(r.get(0), r.get(1), r.get(2), 1500.0));
    }
    Path t = table("constant", rows);
    Result r = run("constant", t, "");
    assertEquals(0, r.code(), r.err());
    assertTrue(r.out().contains("warning: constant columns dropped: fan (they carry no variance; exclude them with"
        + " features.exclude to silence this)"), r.out());
    List<Row> flat = new ArrayList<>();
    for (int i = 0; i < 10; i++) {
      flat.add(RowFactory.create("h" + i, 1.0, 2.0, 3.0));
    }
    Path f = table("flat", flat);
    rejected(run("flat", f, ""), "features.columns: every feature column is constant (cpu, mem, fan): there is no"
        + " variance to analyse");
  }

  @Test
  void duplicateColumnNames() throws Exception {
    // Parquet keeps "cpu" and "CPU" apart; Spark resolves names ignoring case and refuses the pair when the table is
    // opened, which eigenmill reports against input.path (the planner's own case-insensitive check covers sources that
    // Spark opens without complaint)
    Path t = dir.resolve("dupes");
    spark.conf().set("spark.sql.caseSensitive", "true");
    try {
      spark.createDataFrame(healthy(10), SCHEMA).withColumn("CPU", functions.col("cpu").plus(1)).write()
          .parquet(t.toString());
    } finally {
      spark.conf().set("spark.sql.caseSensitive", "false");
    }
    // Spark's sentence after its error class differs between versions: the class and the column are what is checked
    Result r = run("dupes", t, "");
    String prefix = "eigenmill: error: input.path = " + t + ": cannot be read as parquet: [COLUMN_ALREADY_EXISTS] ";
    assertEquals(2, r.code(), r.err());
    assertTrue(r.err().startsWith(prefix), r.err());
    assertEquals(1, r.err().lines().count(), "one line: " + r.err());
    assertTrue(r.err().substring(prefix.length()).contains("`cpu`"), r.err());
    assertTrue(Files.notExists(r.output()), "nothing written");
  }

  @Test
  void moreComponentsThanFeatures() throws Exception {
    Path t = table("few", healthy(30));
    rejected(run("few", t, "reduce.components = 7\n"), "reduce.components = 7: more components than the 3 features");
  }

  @Test
  void entityAndComponentProblemsAtOnceBeforeAnyDataIsRead() throws Exception {
    Path t = table("entity", healthy(30));
    rejected(run("entity", t, "reduce.components = 7\ncluster { enabled = true, entity = rack }\n"),
        "reduce.components = 7: more components than the 3 features\neigenmill: error: cluster.entity = rack: no"
            + " such column in the input (columns: host, cpu, mem, fan)");
  }

  @Test
  void modelWrittenByANewerVersion() throws Exception {
    Path t = table("train", healthy(40));
    Result fit = run("train", t, "");
    assertEquals(0, fit.code(), fit.err());
    Path newer = dir.resolve("newer-model");
    spark.read().parquet(fit.output().resolve("model").toString())
        .withColumn("format_version", functions.lit(99)).write().parquet(newer.toString());
    rejected(run("newer", t, "apply.model = \"" + newer + "\"\n"), "apply.model = " + newer + ": model format 99"
        + " (written by eigenmill 0.1.0) is newer than this version reads (1); use eigenmill 0.1.0 or later, or"
        + " refit the model");
  }

  @Test
  void hoconSyntaxErrorAndUnknownKey() throws Exception {
    Path t = table("syntax", healthy(10));
    Result r = run("syntax", t, "reduce {\n  method = tsqr\n");
    assertEquals(2, r.code());
    assertTrue(r.err().startsWith("eigenmill: error: syntax.conf:6: HOCON syntax error: "), r.err());
    rejected(run("unknown", t, "reduce.metod = tsqr\n"), "unknown.conf:4: reduce.metod: unknown key (did you mean"
        + " reduce.method?)");
  }
}
