package io.eigenmill.plan;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Problems the planner finds against the schema, all reported at once before any data is read: the expected lists
 * are the product's contract (README, "Command line": one line per problem naming the setting, the value and the
 * rule), worked out by hand from the table's columns below.
 */
class PlannerTest extends SparkSuite {
  private static Path table;

  @BeforeAll
  static void writeTable() throws Exception {
    table = Files.createTempDirectory("eigenmill-planner").resolve("t");
    StructType schema = new StructType().add("host", DataTypes.StringType).add("rack_id", DataTypes.IntegerType)
        .add("tags", DataTypes.createArrayType(DataTypes.StringType)).add("cpu", DataTypes.DoubleType)
        .add("mem", DataTypes.DoubleType);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < 8; i++) {
      rows.add(RowFactory.create("h" + i, i % 3, List.of("a").toArray(new String[0]), i * 1.5, 40.0 + i));
    }
    spark.createDataFrame(rows, schema).coalesce(1).write().parquet(table.toString());
  }

  private static List<String> problems(String body) {
    JobSettings s = new SettingsReader().readString("input.path = \"" + table + "\"\noutput.path = \"/tmp/never\"\n"
        + body, List.of(), "p.conf");
    return assertThrows(InvalidJobException.class, () -> Planner.plan(spark, s)).problems();
  }

  @Test
  void entityAndComponentProblemsComeTogether() {
    // features cpu, mem, rack_id (d = 3); rack_id is a feature, not a key, and space = features clusters it
    assertEquals(List.of("reduce.components = 5: more components than the 3 features",
        "cluster.entity = rack_id: the entity column must be one of features.keys [host]; add rack_id to"
            + " features.keys",
        "cluster.entity = rack_id: is one of the clustered columns (cluster.space = features and rack_id is a"
            + " feature); remove it from features.columns or cluster another column"),
        problems("features.keys = [host]\nfeatures.columns = [cpu, mem, rack_id]\nreduce.components = 5\n"
            + "cluster { enabled = true, space = features, entity = rack_id }\n"));
  }

  @Test
  void entityColumnMustExistAndHoldOneValuePerRow() {
    assertEquals(List.of("cluster.entity = rack: no such column in the input (columns: host, rack_id, tags, cpu,"
        + " mem)"), problems("features.keys = [host]\ncluster { enabled = true, entity = rack }\n"));
    assertEquals(List.of("cluster.entity = tags: column tags has type array<string>; an entity column must hold one"
        + " value per row (a string, number, date, timestamp or boolean), not an array, map or struct"),
        problems("features.keys = [host, tags]\ncluster { enabled = true, entity = tags }\n"));
  }

  @Test
  void groupAndSnapshotProblemsNameTheSettingAndTheRule() {
    // group by an array column, and by a feature; snapshots of a table without partition columns
    assertEquals(List.of("output.snapshots = /tmp/store: the input " + table + " has no partition columns, so"
            + " snapshots.by has no default; set snapshots.by = [column, ...] (e.g. [date])",
        "reduce.group-by = [tags, cpu]: column tags: a key column must be a string, boolean, integer, decimal,"
            + " floating, date or timestamp column, not array<string>",
        "reduce.group-by = [tags, cpu]: column cpu is also a feature; within a group it is constant, so it cannot"
            + " be both: exclude it with features.exclude",
        "reduce.group-by = [tags, cpu] with output.snapshots: not available with groups in this version (their"
            + " outputs are of one model); remove it or the grouping"),
        problems("features.columns = [cpu, mem]\nreduce.group-by = [tags, cpu]\n"
            + "output.snapshots = \"/tmp/store\"\n"));
  }

  /**
   * scores/ carries the keys, group columns and partition columns, then writes pc_1.., t2, q, flag_t2, flag_q: a
   * carried column of one of those names (any case) is refused before any work, only when scores/ is written. (It
   * failed when the scores were written, after the fit's pass: Spark refuses two columns of one name.)
   */
  @Test
  void columnsThatScoresCarryCannotHaveTheNamesOfScoreColumns() throws Exception {
    Path t = Files.createTempDirectory("eigenmill-score-names").resolve("t");
    StructType schema = new StructType().add("T2", DataTypes.StringType).add("pc_3", DataTypes.IntegerType)
        .add("pc_x", DataTypes.StringType).add("cpu", DataTypes.DoubleType).add("mem", DataTypes.DoubleType)
        .add("q", DataTypes.IntegerType);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < 8; i++) {
      rows.add(RowFactory.create("h" + i, i, "x" + i, i * 1.5, 40.0 + i * i, i % 2));
    }
    spark.createDataFrame(rows, schema).write().partitionBy("q").parquet(t.toString());
    String body = "input.path = \"" + t + "\"\noutput.path = \"/tmp/never\"\nfeatures.keys = [T2, pc_3, pc_x]\n"
        + "features.columns = [cpu, mem]\n";
    JobSettings scoring = new SettingsReader().readString(body + "output.scores = true\n", List.of(), "p.conf");
    List<String> problems = assertThrows(InvalidJobException.class, () -> Planner.plan(spark, scoring)).problems();
    String rule = "has the name of a column that scores/ writes pc_1, pc_2, ... (one per component), t2, q, flag_t2"
        + " and flag_q after the columns it carries";
    assertEquals(List.of("features.keys: column T2 " + rule + "; leave it out of features.keys or rename it in the"
            + " input", "features.keys: column pc_3 " + rule + "; leave it out of features.keys or rename it in the"
            + " input", "input.path: partition column q " + rule + " (the input's partition columns among them);"
            + " rename the partition column"), problems);
    JobSettings grouped = new SettingsReader().readString("input.path = \"" + t + "\"\noutput.path = \"/tmp/never\"\n"
        + "features.columns = [cpu, mem]\nreduce.group-by = [T2]\noutput.scores = true\n", List.of(), "p.conf");
    assertEquals(List.of("reduce.group-by = [T2]: column T2 " + rule + "; group by a copy of it under another name",
        "input.path: partition column q " + rule + " (the input's partition columns among them); rename the"
            + " partition column"), assertThrows(InvalidJobException.class, () -> Planner.plan(spark, grouped))
        .problems());
    // without scores/ the same columns are fine
    JobSettings fitOnly = new SettingsReader().readString(body, List.of(), "p.conf");
    assertEquals(List.of("cpu", "mem"), Planner.plan(spark, fitOnly).features());
  }

  /**
   * clusters/assignments carry the keys (or the entity alone) and labels/ the keys, then write cluster, distance and
   * second_distance: a carried column of one of those names (any case) is refused before any work. (A key named
   * distance failed after the fit's pass and the k-means runs: "fields should have distinct names", exit 1.)
   */
  @Test
  void columnsThatTheClusteringCarriesCannotHaveTheNamesItWrites() throws Exception {
    Path t = Files.createTempDirectory("eigenmill-cluster-names").resolve("t");
    StructType schema = new StructType().add("Distance", DataTypes.StringType).add("host", DataTypes.StringType)
        .add("cluster_of", DataTypes.StringType).add("cpu", DataTypes.DoubleType).add("mem", DataTypes.DoubleType);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < 8; i++) {
      rows.add(RowFactory.create("d" + i, "h" + (i % 3), "c" + i, i * 1.5, 40.0 + i * i));
    }
    spark.createDataFrame(rows, schema).write().parquet(t.toString());
    String body = "input.path = \"" + t + "\"\noutput.path = \"/tmp/never\"\n"
        + "features.keys = [Distance, host, cluster_of]\nfeatures.columns = [cpu, mem]\n";
    String rule = "writes cluster, distance, second_distance after the columns it carries (names match in any case)";
    JobSettings clustering = new SettingsReader().readString(body + "cluster.enabled = true\n", List.of(), "p.conf");
    assertEquals(List.of("features.keys: column Distance has the name of a column that clusters/assignments " + rule
        + "; leave it out of features.keys or rename it in the input"),
        assertThrows(InvalidJobException.class, () -> Planner.plan(spark, clustering)).problems());
    // by entity the assignments carry the entity alone: the other keys may have any name
    JobSettings byHost = new SettingsReader().readString(body + "cluster.enabled = true\ncluster.entity = host\n",
        List.of(), "p.conf");
    assertEquals(List.of("cpu", "mem"), Planner.plan(spark, byHost).features());
    JobSettings byDistance = new SettingsReader().readString(body
        + "cluster.enabled = true\ncluster.entity = Distance\n", List.of(), "p.conf");
    assertEquals(List.of("cluster.entity = Distance: the entity column has the name of a column that"
        + " clusters/assignments " + rule + "; cluster a copy of it under another name"),
        assertThrows(InvalidJobException.class, () -> Planner.plan(spark, byDistance)).problems());
    // labels/ of apply.centroids carry the keys (the rule alone: an apply needs a stored model to plan)
    JobSettings labelling = new SettingsReader().readString(body + "apply.model = \"/tmp/m\"\n"
        + "apply.centroids = \"/tmp/c\"\n", List.of(), "p.conf");
    List<String> problems = new ArrayList<>();
    ClusterColumns.checkCarried(labelling, List.of("host", "SECOND_DISTANCE"), problems);
    assertEquals(List.of("features.keys: column SECOND_DISTANCE has the name of a column that labels/"
        + " (apply.centroids) " + rule + "; leave it out of features.keys or rename it in the input"), problems);
    // without clustering the same columns are fine
    assertEquals(List.of("cpu", "mem"), Planner.plan(spark, new SettingsReader().readString(body, List.of(),
        "p.conf")).features());
  }

  @Test
  void aGroupedPlanStatesWhereGroupsAreSolvedAndTheSnapshotSize() {
    JobSettings s = new SettingsReader().readString("input.path = \"" + table + "\"\noutput.path = \"/tmp/n\"\n"
        + "features.columns = [cpu, mem]\nreduce.group-by = [host]\n", List.of(), "p.conf");
    JobPlan plan = Planner.plan(spark, s);
    String text = plan.describe();
    org.junit.jupiter.api.Assertions.assertTrue(text.contains("groups:") && text.contains("one model per value of"
        + " host") && text.contains("groups with fewer than 20 usable rows get none"), text);
    JobSettings w = new SettingsReader().readString("input.path = \"" + table + "\"\noutput.path = \"/tmp/n\"\n"
        + "features.columns = [cpu, mem]\nsnapshots.by = [host]\noutput.snapshots = \"/tmp/s\"\n", List.of(),
        "p.conf");
    String snap = Planner.plan(spark, w).describe();
    // 2 features: 8 (1 + 2 + 2 + 3) doubles and the header; the size is the store's own estimate
    org.junit.jupiter.api.Assertions.assertTrue(snap.contains("snapshots:") && snap.contains("writes one per value"
        + " of host") && snap.contains(MemoryEstimate.human(io.eigenmill.io.SnapshotStore.bytesPerSnapshot(2, 0))),
        snap);
  }

  @Test
  void snapshotsWiderThanTheLimitAreRefused() {
    StructType schema = new StructType().add("day", DataTypes.StringType);
    Object[] values = new Object[SnapshotPlan.MAX_FEATURES + 2];
    values[0] = "2026-11-01";
    for (int j = 0; j <= SnapshotPlan.MAX_FEATURES; j++) {
      schema = schema.add("m" + j, DataTypes.DoubleType);
      values[j + 1] = (double) j;
    }
    var wide = spark.createDataFrame(List.of(RowFactory.create(values)), schema);
    JobSettings s = new SettingsReader().readString("input.path = \"/tmp/unused\"\noutput.path = \"/tmp/n\"\n"
        + "snapshots.by = [day]\noutput.snapshots = \"/tmp/s\"\nreduce.method = covariance\n"
        + "reduce.covariance-max-features = 5000\n", List.of(), "p.conf");
    List<String> problems = assertThrows(InvalidJobException.class, () -> Planner.plan(spark, s, wide)).problems();
    org.junit.jupiter.api.Assertions.assertTrue(problems.stream().anyMatch(p -> p.startsWith("output.snapshots ="
        + " /tmp/s: 4001 features") && p.contains("up to 4000 features")), problems.toString());
  }
}
