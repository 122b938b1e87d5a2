package io.eigenmill.plan;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

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
 * Settings without effect found against the schema: a numeric key column that a feature glob matches is a key only,
 * and the plan says so; the settings' own warnings come first. The expected feature lists are worked out by hand
 * from the table's columns and the glob rules in the README (brute force in the test).
 */
class PlannerWarningsTest extends SparkSuite {
  private static Path table;

  @BeforeAll
  static void writeTable() throws Exception {
    table = Files.createTempDirectory("eigenmill-plan-warnings").resolve("t");
    StructType schema = new StructType().add("host", DataTypes.StringType).add("rack_id", DataTypes.IntegerType)
        .add("cpu_user", DataTypes.DoubleType).add("cpu_idle", DataTypes.DoubleType)
        .add("mem_used", DataTypes.DoubleType);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < 8; i++) {
      rows.add(RowFactory.create("h" + i, i % 3, i * 1.5, 100 - i * 1.5, 40.0 + i));
    }
    spark.createDataFrame(rows, schema).coalesce(1).write().parquet(table.toString());
  }

  private static JobPlan plan(String body, String... sets) {
    JobSettings s = new SettingsReader().readString("input.path = \"" + table + "\"\noutput.path = \"/tmp/never\"\n"
        + body, List.of(sets), "p.conf");
    return Planner.plan(spark, s);
  }

  @Test
  void aGlobMatchingANumericKeyIsAWarning() {
    JobPlan p = plan("features.keys = [host, rack_id]\nfeatures.columns = [\"*_*\"]\n");
    // '*_*' matches rack_id, cpu_user, cpu_idle, mem_used; rack_id is a key
    assertEquals(List.of("cpu_user", "cpu_idle", "mem_used"), p.features());
    assertEquals(List.of("features.columns: '*_*' matches rack_id, which is in features.keys: rack_id is used as a"
        + " key only, not as a feature (add it to features.exclude, or write features.columns so that no glob"
        + " matches it, to silence this warning)"), p.warnings());
    assertTrue(p.describe().contains("warning:         features.columns: '*_*' matches rack_id"), p.describe());
  }

  @Test
  void noWarningWhenNothingIsLost() {
    // the default (all numeric non-key columns) leaves keys out by definition
    assertEquals(List.of(), plan("features.keys = [host, rack_id]\n").warnings());
    // excluded as well: the user said so twice
    JobPlan excluded = plan("features.keys = [rack_id]\nfeatures.columns = [\"*\"]\nfeatures.exclude = [rack_id]\n");
    assertEquals(List.of("cpu_user", "cpu_idle", "mem_used"), excluded.features());
    assertEquals(List.of(), excluded.warnings());
    // a string key could never be a feature
    assertEquals(List.of(), plan("features.keys = [host]\nfeatures.columns = [\"*\"]\n").warnings());
  }

  @Test
  void settingsWarningsComeFirst() {
    JobPlan p = plan("features.keys = [rack_id]\nfeatures.columns = [\"*\"]\ncluster { enabled = true, k = 2 }\n",
        "cluster.enabled=false");
    assertEquals(2, p.warnings().size(), p.warnings().toString());
    assertTrue(p.warnings().get(0).startsWith("p.conf:5: cluster.k = 2: ignored, because cluster.enabled = false"
        + " (--set)"), p.warnings().get(0));
    assertTrue(p.warnings().get(1).startsWith("features.columns: '*' matches rack_id"), p.warnings().get(1));
  }
}
