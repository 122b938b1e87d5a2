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
}
