package io.eigenmill.monitor;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Scoring with one model per group: every row's T2 and Q against those of a fit of its group's rows alone (whose
 * model the grouped fit equals bit for bit, GroupedFitTest), and rows of groups without a model under each
 * {@code apply.unknown-group}. The T2 reference is also its definition: sum of score^2 / eigenvalue (Hotelling
 * 1931).
 */
class GroupedScoringTest extends SparkSuite {
  static final List<String> FEATURES = List.of("a", "b", "c", "d");
  static Path dir;
  static Path train;
  static Path fresh;

  @BeforeAll
  static void tables() {
    dir = JobFiles.scratch("gscore");
    train = dir.resolve("train");
    fresh = dir.resolve("fresh");
    write(train, 4000, 1, new String[] {"east", "west", "north", null}, 3);
    write(fresh, 600, 2, new String[] {"east", "west", "north", null, "south"}, 2);
  }

  /** Rows of groups with their own loadings; groups in random order, so blocks mix them. */
  private static void write(Path path, int n, long seed, String[] groups, int files) {
    StructType schema = new StructType().add("id", DataTypes.IntegerType).add("region", DataTypes.StringType);
    for (String f : FEATURES) {
      schema = schema.add(f, DataTypes.DoubleType);
    }
    SplittableRandom r = new SplittableRandom(seed);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < n; i++) {
      int g = r.nextInt(groups.length);
      double u = r.nextGaussian();
      double v = r.nextGaussian();
      rows.add(RowFactory.create(i, groups[g], 10 * g + u, (g + 1) * v - u, g == 2 ? 3.0 : u + v
          + 0.2 * r.nextGaussian(), 0.5 * r.nextGaussian() + g * u));
    }
    spark.createDataFrame(rows, schema).repartition(files).write().parquet(path.toString());
  }

  static RunResult run(String hocon) {
    return JobRunner.run(spark, JobFiles.settings(hocon));
  }

  private static Map<Integer, Row> byId(Path scores) {
    Map<Integer, Row> out = new HashMap<>();
    for (Row r : spark.read().parquet(scores.toString()).collectAsList()) {
      out.put(r.getInt(r.fieldIndex("id")), r);
    }
    return out;
  }

  @Test
  void eachRowIsScoredWithItsGroupsModel() throws Exception {
    String common = "input.path = \"" + train + "\"\nfeatures.columns = " + JobFiles.quoted(FEATURES)
        + "\nfeatures.keys = [id]\nreduce.components = 2\noutput.scores = true\n";
    Path grouped = dir.resolve("grouped");
    RunResult g = run(common + "reduce.group-by = [region]\nreduce.min-group-rows = 20\noutput.path = \"" + grouped
        + "\"\n");
    // the north group's feature c is constant: its model has 3 features, read from the block's columns
    var north = g.fit().groups().models().get(io.eigenmill.engine.KeyValues.of("north"));
    assertEquals(List.of("a", "b", "d"), north.features());
    Map<Integer, Row> scores = byId(grouped.resolve("scores"));
    assertEquals(4000, scores.size());
    for (String where : List.of("region = 'east'", "region = 'north'", "region is null")) {
      Path alone = dir.resolve("alone-" + where.replaceAll("[^a-z]", ""));
      run(common + "input.where = \"" + where + "\"\noutput.path = \"" + alone + "\"\n");
      Map<Integer, Row> ref = byId(alone.resolve("scores"));
      assertFalse(ref.isEmpty());
      for (Map.Entry<Integer, Row> e : ref.entrySet()) {
        Row a = e.getValue();
        Row b = scores.get(e.getKey());
        // the same model (bit for bit) and the same row: the same dgemm over a block of other rows; 1e-12
        // relative allows the blocks' different sizes (BLAS kernels may sum in another order)
        for (String c : List.of("pc_1", "pc_2", "t2", "q")) {
          double x = a.getDouble(a.fieldIndex(c));
          assertEquals(x, b.getDouble(b.fieldIndex(c)), 1e-12 * Math.max(1, Math.abs(x)), where + " " + c);
        }
        assertEquals(a.getBoolean(a.fieldIndex("flag_t2")), b.getBoolean(b.fieldIndex("flag_t2")));
        assertEquals(a.getBoolean(a.fieldIndex("flag_q")), b.getBoolean(b.fieldIndex("flag_q")));
        // T2 by its definition from the row's scores and its group's eigenvalues
        double[] ev = (where.contains("north") ? north : g.fit().groups().models().get(
            where.contains("east") ? io.eigenmill.engine.KeyValues.of("east")
                : new io.eigenmill.engine.KeyValues(java.util.Arrays.asList((String) null)))).eigenvalues();
        double p1 = b.getDouble(b.fieldIndex("pc_1"));
        double p2 = b.getDouble(b.fieldIndex("pc_2"));
        assertEquals(p1 * p1 / ev[0] + p2 * p2 / ev[1], b.getDouble(b.fieldIndex("t2")), 1e-9 * (1
            + b.getDouble(b.fieldIndex("t2"))));
      }
    }
    JsonNode summary = new ObjectMapper().readTree(grouped.resolve("summary.json").toFile());
    assertEquals(0, summary.get("monitoring").get("unknown_group_rows").asLong());
    // the row reader (CSV: no columnar scan) scores the same rows alike: blocks end where the group changes
    Path csv = dir.resolve("train-csv");
    spark.read().parquet(train.toString()).coalesce(2).write().option("header", true).csv(csv.toString());
    Path fromCsv = dir.resolve("grouped-csv");
    RunResult c = run(common.replace(train.toString(), csv.toString()) + "input.format = csv\n"
        + "reduce.group-by = [region]\nreduce.min-group-rows = 20\noutput.path = \"" + fromCsv + "\"\n");
    assertFalse(c.monitor() == null);
    Map<Integer, Row> rows = byId(fromCsv.resolve("scores"));
    assertEquals(4000, rows.size());
    for (Map.Entry<Integer, Row> e : rows.entrySet()) {
      Row a = scores.get(e.getKey());
      Row b = e.getValue();
      // models from other partitions (equal to rounding): 1e-9 relative
      double t2 = a.getDouble(a.fieldIndex("t2"));
      assertEquals(t2, b.getDouble(b.fieldIndex("t2")), 1e-9 * Math.max(1, t2), "row " + e.getKey());
      assertEquals(a.isNullAt(a.fieldIndex("region")) ? null : a.getString(a.fieldIndex("region")),
          b.isNullAt(b.fieldIndex("region")) ? null : b.getString(b.fieldIndex("region")));
    }
  }

  @Test
  void rowsOfGroupsWithoutAModelFollowApplyUnknownGroup() throws Exception {
    Path fit = dir.resolve("fit");
    run("input.path = \"" + train + "\"\nfeatures.columns = " + JobFiles.quoted(FEATURES) + "\nfeatures.keys = [id]\n"
        + "reduce.group-by = [region]\nreduce.min-group-rows = 20\nreduce.components = 2\noutput.path = \"" + fit
        + "\"\n");
    String apply = "input.path = \"" + fresh + "\"\nfeatures.keys = [id]\napply.model = \"" + fit + "\"\n";
    Path flagged = dir.resolve("flag");
    RunResult f = run(apply + "output.path = \"" + flagged + "\"\n");
    Dataset<Row> s = spark.read().parquet(flagged.resolve("scores").toString());
    long south = spark.read().parquet(fresh.toString()).where("region = 'south'").count();
    assertTrue(south > 50);
    assertEquals(600, s.count(), "flag keeps every row");
    Dataset<Row> unknown = s.where("region = 'south'");
    assertEquals(south, unknown.count());
    assertEquals(south, unknown.where("t2 is null and q is null and pc_1 is null and flag_t2 and flag_q").count());
    assertEquals(south, f.monitor().unknownGroupRows());
    assertEquals(List.of("region=south"), f.monitor().unknownGroups());
    assertEquals(0, s.where("region <> 'south' or region is null").where("t2 is null").count());
    Path skipped = dir.resolve("skip");
    RunResult k = run(apply + "apply.unknown-group = skip\noutput.path = \"" + skipped + "\"\n");
    assertEquals(600 - south, spark.read().parquet(skipped.resolve("scores").toString()).count());
    assertEquals(south, k.monitor().unknownGroupRows());
    InvalidJobException fail = assertThrows(InvalidJobException.class, () -> run(apply
        + "apply.unknown-group = fail\noutput.path = \"" + dir.resolve("fail") + "\"\n"));
    assertTrue(fail.getMessage().contains("apply.unknown-group = fail") && fail.getMessage().contains("region=south"),
        fail.getMessage());
    assertFalse(dir.resolve("fail").toFile().exists(), "nothing is committed");
    JsonNode summary = new ObjectMapper().readTree(flagged.resolve("summary.json").toFile());
    assertEquals(south, summary.get("monitoring").get("unknown_group_rows").asLong());
  }
}
