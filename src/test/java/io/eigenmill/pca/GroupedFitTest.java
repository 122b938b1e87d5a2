package io.eigenmill.pca;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.engine.FeatureInput;
import io.eigenmill.engine.KeyColumns;
import io.eigenmill.engine.KeyValues;
import io.eigenmill.engine.ReadMode;
import io.eigenmill.math.BlockPrep;
import io.eigenmill.plan.GroupPlan;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.Choices.Scaling;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.io.GroupModels;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.io.InputStream;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * One model per group: each group's model against numpy's eigendecomposition of that group's covariance and
 * correlation (wine split by its class: src/test/resources/groups/make_reference.py), and the grouped fit against
 * separate fits of each group's rows (input.where), which it must equal bit for bit.
 */
class GroupedFitTest extends SparkSuite {
  static final String[] FEATURES = {"a", "b", "c", "d", "e"};
  static Path dir;
  static Path fleet;

  @BeforeAll
  static void table() {
    dir = JobFiles.scratch("groups");
    fleet = dir.resolve("fleet");
    StructType schema = new StructType().add("id", DataTypes.IntegerType).add("host", DataTypes.StringType)
        .add("hw", DataTypes.StringType);
    for (String f : FEATURES) {
      schema = schema.add(f, DataTypes.DoubleType);
    }
    SplittableRandom r = new SplittableRandom(5);
    List<Row> rows = new ArrayList<>();
    String[] hw = {"gen1", "gen2", "gen3", null, "tiny"};
    for (int i = 0; i < 5000; i++) {
      int g = r.nextInt(100) < 2 ? 4 : r.nextInt(4);
      if (g == 4 && i % 3 != 0) {
        g = 0;
      }
      double u = r.nextGaussian();
      double v = r.nextGaussian();
      Object[] x = new Object[FEATURES.length + 3];
      x[0] = i;
      x[1] = "edge-" + (i % 50);
      x[2] = hw[g];
      // each generation loads the two factors differently: the groups' subspaces differ
      x[3] = 100 * g + u * (1 + g) + 0.1 * r.nextGaussian();
      x[4] = (g % 2 == 0 ? u : -u) + 2 * v + 0.1 * r.nextGaussian();
      x[5] = r.nextInt(40) == 0 ? null : g * v + 0.3 * r.nextGaussian();
      x[6] = 1e6 + 1e3 * (u - v) * (g + 1) + r.nextGaussian();
      x[7] = r.nextGaussian();
      rows.add(RowFactory.create(x));
    }
    spark.createDataFrame(rows, schema).repartition(4).write().parquet(fleet.toString());
  }

  static RunResult run(String hocon) {
    return JobRunner.run(spark, JobFiles.settings(hocon));
  }

  static JsonNode numpy() throws Exception {
    try (InputStream in = GroupedFitTest.class.getResourceAsStream("/groups/wine-by-class.reference.json")) {
      return new ObjectMapper().readTree(in);
    }
  }

  @Test
  void eachWineClassMatchesNumpysEigendecompositionOfItsRows() throws Exception {
    JsonNode ref = numpy();
    List<String> features = Datasets.strings(ref.get("features"));
    String csv = Datasets.csv("wine").toString();
    for (String scaling : List.of("none", "standardize")) {
      Path out = dir.resolve("wine-" + scaling);
      RunResult result = run("input.path = \"" + csv + "\"\ninput.format = csv\nfeatures.columns = "
          + JobFiles.quoted(features) + "\nreduce.group-by = [class]\nreduce.min-group-rows = 20\n"
          + "reduce.components = 3\nprepare.scaling = " + scaling + "\noutput.path = \"" + out + "\"\n");
      Groups groups = result.fit().groups();
      assertEquals(3, groups.groups().size());
      GroupModels stored = ModelStore.readGroups(spark, "apply.model", out.toString());
      assertEquals(List.of("class"), stored.columns());
      assertEquals(3, stored.models().size());
      for (String c : List.of("1", "2", "3")) {
        JsonNode g = ref.get("groups").get(c);
        JsonNode side = g.get(scaling.equals("none") ? "covariance" : "correlation");
        PcaModel m = stored.models().get(KeyValues.of(c));
        assertEquals(g.get("rows").asLong(), m.rows(), "class " + c);
        double[] ev = Datasets.doubles(side.get("eigenvalues"));
        // eigenvalues: 1e-9 relative to the largest (both sides are LAPACK-accurate to ~1e-15 lambda_1; the
        // moments are summed in another order)
        for (int i = 0; i < ev.length; i++) {
          assertEquals(ev[i], m.eigenvalues()[i], 1e-9 * ev[0], "class " + c + " eigenvalue " + i);
        }
        // loadings of the 3 kept components: within 1e-9 or 64 eps lambda_1 / gap (Davis-Kahan), the larger
        double[][] v = Datasets.matrix(side.get("loadings_first3"));
        for (int comp = 0; comp < 3; comp++) {
          double gap = Math.min(comp > 0 ? ev[comp - 1] - ev[comp] : Double.MAX_VALUE, ev[comp] - ev[comp + 1]);
          double tol = Math.max(1e-9, 64 * Math.ulp(1.0) * ev[0] / gap);
          for (int j = 0; j < features.size(); j++) {
            assertEquals(v[comp][j], m.loading(j, comp), tol, "class " + c + " loading " + j + " of " + comp);
          }
        }
        double[] means = Datasets.doubles(g.get("means"));
        for (int j = 0; j < means.length; j++) {
          assertEquals(means[j], m.means()[j], 1e-12 * Math.abs(means[j]), "class " + c + " mean " + j);
        }
      }
      // spectrum/ and components/ (exploded by Spark from the model table) hold the solver's own numbers, bit for bit
      for (GroupFit gf : groups.groups()) {
        String c = gf.key().get(0);
        List<Row> spectrum = spark.read().parquet(out.resolve("spectrum").toString()).where("class = " + c)
            .orderBy("component").collectAsList();
        double[] shares = gf.solved().spectrum().varianceShares();
        double[] cumulative = gf.solved().spectrum().cumulativeVarianceShares();
        assertEquals(shares.length, spectrum.size());
        for (int i = 0; i < shares.length; i++) {
          Row r = spectrum.get(i);
          assertEquals(shares[i], r.getDouble(r.fieldIndex("variance_share")), 0.0, "class " + c + " share " + i);
          assertEquals(cumulative[i], r.getDouble(r.fieldIndex("cumulative_variance_share")), 0.0,
              "class " + c + " cumulative " + i);
          assertEquals(i < 3, r.getBoolean(r.fieldIndex("kept")));
        }
        PcaModel m = gf.solved().model();
        List<Row> components = spark.read().parquet(out.resolve("components").toString()).where("class = " + c)
            .collectAsList();
        assertEquals(3 * features.size(), components.size());
        for (Row r : components) {
          int comp = r.getInt(r.fieldIndex("component"));
          int j = features.indexOf(r.getString(r.fieldIndex("feature")));
          assertEquals(m.loading(j, comp - 1), r.getDouble(r.fieldIndex("loading")), 0.0, "class " + c);
        }
      }
      JsonNode summary = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
      assertEquals(3, summary.get("groups").size());
      assertEquals("2", summary.get("groups").get(0).get("key").get("class").asText(), "largest class first");
      assertEquals(3, summary.get("groups").get(0).get("components").asInt());
      assertEquals(3, summary.get("groups").get(0).get("variance_shares").size());
      assertEquals("driver", summary.get("group_by").get("solved_on").asText());
      // the pooled model of all 178 rows, as a fit without groups writes it
      assertEquals(178, ModelStore.read(spark, "apply.model", out.resolve("pooled-model").toString()).rows());
    }
  }

  @Test
  void theGroupedFitEqualsSeparateFitsOfEachGroupsRowsBitForBit() {
    Path out = dir.resolve("grouped");
    String common = "input.path = \"" + fleet + "\"\nfeatures.columns = " + JobFiles.quoted(List.of(FEATURES))
        + "\nreduce.components = 2\nreduce.block-rows = 64\n";
    RunResult grouped = run(common + "reduce.group-by = [hw]\nreduce.min-group-rows = 50\noutput.path = \""
        + out + "\"\n");
    Groups groups = grouped.fit().groups();
    assertEquals(5, groups.groups().size());
    int compared = 0;
    for (GroupFit g : groups.groups()) {
      String hw = g.key().get(0);
      if (!g.hasModel()) {
        assertEquals("tiny", hw, "only the tiny group is below 50 rows");
        assertTrue(g.skipReason().contains("reduce.min-group-rows = 50"), g.skipReason());
        continue;
      }
      String where = hw == null ? "hw is null" : "hw = '" + hw + "'";
      RunResult alone = run(common + "input.where = \"" + where + "\"\noutput.path = \""
          + dir.resolve("alone-" + hw) + "\"\n");
      PcaModel a = alone.model();
      PcaModel b = g.solved().model();
      assertEquals(a.rows(), b.rows(), where);
      assertArrayEquals(a.eigenvalues(), b.eigenvalues(), 0.0, where + ": eigenvalues, bit for bit");
      assertArrayEquals(a.loadings(), b.loadings(), 0.0, where + ": loadings, bit for bit");
      assertArrayEquals(a.means(), b.means(), 0.0, where + ": means, bit for bit");
      compared++;
    }
    assertEquals(4, compared, "gen1, gen2, gen3 and the null group");
    GroupModels stored = ModelStore.readGroups(spark, "apply.model", out.toString());
    assertTrue(stored.models().containsKey(new KeyValues(Arrays.asList((String) null))), "the null group");
    assertFalse(stored.models().containsKey(KeyValues.of("tiny")));
    assertEquals(5000, grouped.fit().rowsRead());
    assertEquals(5000 - grouped.fit().rowsDropped(), grouped.model().rows(), "the pooled model has every row");
  }

  @Test
  void thePartitioningChangesNothingBeyondRounding() {
    String common = "features.columns = " + JobFiles.quoted(List.of(FEATURES)) + "\nreduce.components = 2\n"
        + "reduce.group-by = [hw]\nreduce.min-group-rows = 50\n";
    Path one = dir.resolve("one-file");
    spark.read().parquet(fleet.toString()).coalesce(1).write().parquet(one.toString());
    RunResult a = run(common + "input.path = \"" + fleet + "\"\noutput.path = \"" + dir.resolve("p4") + "\"\n");
    RunResult b = run(common + "input.path = \"" + one + "\"\noutput.path = \"" + dir.resolve("p1") + "\"\n");
    var ma = a.fit().groups().models();
    var mb = b.fit().groups().models();
    assertEquals(ma.keySet(), mb.keySet());
    for (KeyValues k : ma.keySet()) {
      double[] ea = ma.get(k).eigenvalues();
      double[] eb = mb.get(k).eigenvalues();
      for (int i = 0; i < ea.length; i++) {
        // the same rows merged in other trees: 1e-10 relative to the largest eigenvalue (the moments agree to a
        // few hundred eps of lambda_1)
        assertEquals(ea[i], eb[i], 1e-10 * ea[0], k + " eigenvalue " + i);
      }
    }
  }

  @Test
  void oneGroupAKeyThatIsAFeatureAndTheRandomizedMethodAreDocumentedCases() {
    String common = "input.path = \"" + fleet + "\"\nfeatures.columns = " + JobFiles.quoted(List.of(FEATURES))
        + "\n";
    RunResult single = run(common + "input.where = \"hw = 'gen2'\"\nreduce.group-by = [hw]\nreduce.components = 2\n"
        + "output.path = \"" + dir.resolve("single") + "\"\n");
    assertEquals(1, single.fit().groups().groups().size());
    PcaModel only = single.fit().groups().models().get(KeyValues.of("gen2"));
    assertArrayEquals(single.model().eigenvalues(), only.eigenvalues(), 1e-12 * only.eigenvalues()[0],
        "one group: its model is the pooled model");
    InvalidJobException feature = assertThrows(InvalidJobException.class, () -> run("input.path = \"" + fleet
        + "\"\nreduce.group-by = [a]\noutput.path = \"" + dir.resolve("x1") + "\"\n"));
    assertTrue(feature.getMessage().contains("reduce.group-by = [a]: column a is also a feature"),
        feature.getMessage());
    InvalidJobException randomized = assertThrows(InvalidJobException.class, () -> run(common
        + "reduce.group-by = [hw]\nreduce.method = randomized\noutput.path = \"" + dir.resolve("x2") + "\"\n"));
    assertTrue(randomized.getMessage().contains("reduce.method = randomized"), randomized.getMessage());
    InvalidJobException missing = assertThrows(InvalidJobException.class, () -> run(common
        + "reduce.group-by = [rack]\noutput.path = \"" + dir.resolve("x3") + "\"\n"));
    assertTrue(missing.getMessage().contains("column rack is not in the input"), missing.getMessage());
    // default minimum: 10 x 5 features = 50 rows; the tiny group (about 30 rows) has none
    RunResult defaults = run(common + "reduce.group-by = [hw]\noutput.path = \"" + dir.resolve("defaults") + "\"\n");
    assertEquals(50, defaults.fit().groups().minRows());
    GroupFit tiny = defaults.fit().groups().groups().stream().filter(g -> "tiny".equals(g.key().get(0)))
        .findFirst().orElseThrow();
    assertNull(tiny.solved());
  }

  /**
   * The rows counted per group before the pass (Spark's aggregation over the group columns, then their text) name
   * the same groups as the pass's own key texts, for group columns of every kind: a run whose texts differed would
   * stop ("counted but not read"). Reference: Spark's own {@code groupBy(column).count()} of the same table, whose
   * counts each group's rows read must equal. A group column with the name of a column of the group tables (here
   * Rows, as model/'s rows) is refused before any work: the tables could not hold both.
   */
  @Test
  void groupsOfEveryColumnKindAreCountedUnderThePassesOwnTexts() {
    Path typed = dir.resolve("typed");
    spark.read().parquet(fleet.toString()).selectExpr("*",
        "cast(id % 3 as int) as slot", "id % 2 as Rows",
        "case id % 5 when 0 then cast(-0.0 as double) when 1 then 0.0D when 2 then 1.5D when 3 then cast('NaN' as"
            + " double) else null end as temp",
        "date_add(date '2026-11-30', id % 4) as day",
        "timestamp_seconds(1796000000 + (id % 3) * 1800) + make_interval(0, 0, 0, 0, 0, 0, (id % 2) * 0.25) as at",
        "cast((id % 4) * 1.25 as decimal(10, 2)) as price").write().parquet(typed.toString());
    Dataset<Row> table = spark.read().parquet(typed.toString());
    String common = "input.path = \"" + typed + "\"\nfeatures.columns = " + JobFiles.quoted(List.of(FEATURES))
        + "\nreduce.min-group-rows = 10\nreduce.components = 2\n";
    for (List<String> by : List.of(List.of("slot"), List.of("temp"), List.of("day"), List.of("at"),
        List.of("price"), List.of("slot", "temp"))) {
      RunResult r = run(common + "reduce.group-by = " + JobFiles.quoted(by) + "\noutput.path = \""
          + dir.resolve("typed-" + String.join("-", by)) + "\"\n");
      List<Row> spark = table.groupBy(by.stream().map(org.apache.spark.sql.functions::col)
          .toArray(org.apache.spark.sql.Column[]::new)).count().collectAsList();
      assertEquals(spark.size(), r.fit().groups().groups().size(), by + ": one group per Spark group");
      long[] ours = r.fit().groups().groups().stream().mapToLong(GroupFit::rowsRead).sorted().toArray();
      long[] theirs = spark.stream().mapToLong(row -> row.getLong(by.size())).sorted().toArray();
      assertArrayEquals(theirs, ours, by + ": rows per group");
    }
    InvalidJobException clash = assertThrows(InvalidJobException.class, () -> run(common
        + "reduce.group-by = [Rows]\noutput.path = \"" + dir.resolve("typed-clash") + "\"\n"));
    assertTrue(clash.getMessage().contains("reduce.group-by = [Rows]: column Rows has the name of a column that"
        + " model/, components/ and spectrum/ write"), clash.getMessage());
  }

  @Test
  void groupsSolvedOnTheExecutorsEqualThoseSolvedOnTheDriverAndSmallBlocksChangeOnlyRounding() {
    Dataset<Row> table = spark.read().parquet(fleet.toString());
    List<String> features = List.of(FEATURES);
    List<String> types = java.util.Collections.nCopies(FEATURES.length, "double");
    FeatureInput input = new FeatureInput(table, features, 64);
    KeyColumns by = new KeyColumns(List.of("hw"), List.of("string"), "UTC");
    JobSettings.Reduce reduce = JobFiles.settings("input.path = x\noutput.path = y\nreduce.components = 2\n"
        + "reduce.block-rows = 64\n").reduce();
    ModelSolver solver = ModelSolver.of(features, types, Scaling.NONE, Method.COVARIANCE, reduce);
    long block = 8L * 64 * (FEATURES.length + 1);
    GroupedFit.Outcome driver = GroupedFit.run(input, new GroupPlan(by, 50, 200, block, Long.MAX_VALUE, 1L << 30),
        solver, ReadMode.DROP, BlockPrep.identity(), 64);
    GroupedFit.Outcome executors = GroupedFit.run(input, new GroupPlan(by, 50, 200, block, 0, 1L << 30), solver,
        ReadMode.DROP, BlockPrep.identity(), 64);
    // one group's full block per task; the others get blocks of GroupPlan.MIN_BLOCK_ROWS rows
    GroupedFit.Outcome small = GroupedFit.run(input, new GroupPlan(by, 50, 200, block, Long.MAX_VALUE, block),
        solver, ReadMode.DROP, BlockPrep.identity(), 64);
    assertTrue(driver.onDriver());
    assertFalse(executors.onDriver());
    assertEquals(driver.groups().size(), executors.groups().size());
    for (int i = 0; i < driver.groups().size(); i++) {
      GroupFit a = driver.groups().get(i);
      GroupFit b = executors.groups().get(i);
      GroupFit c = small.groups().get(i);
      assertEquals(a.key(), b.key());
      assertEquals(a.rowsRead(), b.rowsRead());
      assertEquals(a.hasModel(), b.hasModel());
      if (a.hasModel()) {
        // the same tree of merges wherever it runs: bit for bit
        assertArrayEquals(a.solved().model().eigenvalues(), b.solved().model().eigenvalues(), 0.0, a.key() + "");
        assertArrayEquals(a.solved().model().loadings(), b.solved().model().loadings(), 0.0, a.key() + "");
        // other block boundaries: rounding only, 1e-10 relative to the largest eigenvalue
        double[] ea = a.solved().model().eigenvalues();
        double[] ec = c.solved().model().eigenvalues();
        for (int j = 0; j < ea.length; j++) {
          assertEquals(ea[j], ec[j], 1e-10 * ea[0], a.key() + " eigenvalue " + j + " with small blocks");
        }
      }
    }
    assertArrayEquals(driver.pooled().solved().model().eigenvalues(),
        executors.pooled().solved().model().eigenvalues(), 0.0, "the pooled model");
  }

  @Test
  void tsqrFitsEachGroupToo() {
    RunResult cov = run("input.path = \"" + fleet + "\"\nfeatures.columns = " + JobFiles.quoted(List.of(FEATURES))
        + "\nreduce.group-by = [hw]\nreduce.components = 2\nreduce.method = covariance\noutput.path = \""
        + dir.resolve("cov") + "\"\n");
    RunResult tsqr = run("input.path = \"" + fleet + "\"\nfeatures.columns = " + JobFiles.quoted(List.of(FEATURES))
        + "\nreduce.group-by = [hw]\nreduce.components = 2\nreduce.method = tsqr\noutput.path = \""
        + dir.resolve("tsqr") + "\"\n");
    var a = cov.fit().groups().models();
    var b = tsqr.fit().groups().models();
    assertEquals(a.keySet(), b.keySet());
    for (KeyValues k : a.keySet()) {
      for (int i = 0; i < 5; i++) {
        // two methods, the same eigenvalues: 1e-9 relative to the largest (the covariance squares the condition
        // number, TSQR does not; both are far more accurate than this here)
        assertEquals(a.get(k).eigenvalues()[i], b.get(k).eigenvalues()[i], 1e-9 * a.get(k).eigenvalues()[0],
            k + " eigenvalue " + i);
      }
    }
  }

  /**
   * Groups solved on the executors take the solver with them: it must serialize with every k rule (a fixed
   * reduce.components was an OptionalInt inside the settings, which Java serialization refuses), and come back
   * choosing the same k. Java serialization is what Spark's closure serializer uses for the finisher.
   */
  @Test
  void theSolverSerializesForTheExecutorsWithEveryKRule() throws Exception {
    for (String rule : List.of("reduce.components = 2", "reduce.variance-target = 0.8")) {
      var settings = JobFiles.settings("input.path = \"" + fleet + "\"\nfeatures.columns = "
          + JobFiles.quoted(List.of(FEATURES)) + "\n" + rule + "\noutput.path = \"" + dir.resolve("unused") + "\"\n");
      ModelSolver solver = ModelSolver.of(List.of(FEATURES), java.util.Collections.nCopies(FEATURES.length,
          "double"), settings.prepare().scaling(), io.eigenmill.settings.Choices.Method.COVARIANCE,
          settings.reduce());
      var bytes = new java.io.ByteArrayOutputStream();
      try (var out = new java.io.ObjectOutputStream(bytes)) {
        out.writeObject(solver);
      }
      try (var in = new java.io.ObjectInputStream(new java.io.ByteArrayInputStream(bytes.toByteArray()))) {
        assertEquals(solver, in.readObject(), rule);
      }
    }
  }
}
