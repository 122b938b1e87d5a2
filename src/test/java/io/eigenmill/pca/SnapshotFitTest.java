package io.eigenmill.pca;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.io.PcaModel;
import io.eigenmill.io.Snapshot;
import io.eigenmill.io.SnapshotEntry;
import io.eigenmill.io.SnapshotKey;
import io.eigenmill.io.SnapshotStore;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Fits from moment snapshots against fits over the same rows: a data fit with {@code input.where} selecting the
 * snapshots' keys (the claim: merging snapshots is the fit over their rows) and Commons Math's eigendecomposition of
 * the covariance computed in the test from the complete rows (the outside reference).
 */
class SnapshotFitTest extends SparkSuite {
  static final String[] FEATURES = {"hits", "misses", "bytes_out", "latency_ms", "conns", "evictions"};
  static final String[] DATES = {"2026-11-01", "2026-11-02", "2026-11-03", "2026-11-04", "2026-11-05"};
  static Path table;
  static Path store;
  static Path dir;

  @BeforeAll
  static void writeTableAndStore() {
    dir = JobFiles.scratch("snapfit");
    table = dir.resolve("fleet");
    store = dir.resolve("store");
    StructType schema = new StructType().add("host", DataTypes.StringType);
    for (String f : FEATURES) {
      schema = schema.add(f, f.equals("conns") ? DataTypes.IntegerType : DataTypes.DoubleType);
    }
    schema = schema.add("date", DataTypes.StringType);
    SplittableRandom r = new SplittableRandom(11);
    List<Row> rows = new ArrayList<>();
    for (int day = 0; day < DATES.length; day++) {
      // each day has its own mean and its own mix of two factors: the window's covariance differs from any day's
      for (int i = 0; i < 700 + 40 * day; i++) {
        double a = r.nextGaussian();
        double b = r.nextGaussian() * (1 + 0.2 * day);
        Object[] v = new Object[FEATURES.length + 2];
        v[0] = "edge-" + (i % 37);
        v[1] = 1e5 + 300 * a + 20 * day + r.nextGaussian();
        v[2] = 50 + 4 * b - 2 * a + r.nextGaussian();
        v[3] = 1e9 + 1e6 * (a + 0.5 * b) + 1e4 * r.nextGaussian();
        v[4] = r.nextInt(20) == 0 ? null : 12 + 0.5 * b + 0.1 * r.nextGaussian();
        v[5] = (int) Math.round(400 + 30 * a + 10 * r.nextGaussian());
        v[6] = 0.3 * b + r.nextGaussian() * 0.05 + day;
        v[7] = DATES[day];
        rows.add(RowFactory.create(v));
      }
    }
    spark.createDataFrame(rows, schema).repartition(3).write().partitionBy("date").parquet(table.toString());
    run("input.path = \"" + table + "\"\noutput.snapshots = \"" + store + "\"\noutput.path = \"" + dir.resolve("all")
        + "\"\nfeatures.keys = [host]\n");
  }

  static RunResult run(String hocon) {
    return JobRunner.run(spark, JobFiles.settings(hocon));
  }

  static SnapshotStore openStore() {
    return SnapshotStore.open(spark.sparkContext().hadoopConfiguration(), "input.snapshots", store.toString(), false);
  }

  @Test
  void theStoreHoldsOneSnapshotPerDateWithTheRowsOfThatDate() {
    SnapshotStore s = openStore();
    List<SnapshotKey> keys = s.select(spark, "");
    assertEquals(DATES.length, keys.size());
    for (int day = 0; day < DATES.length; day++) {
      Snapshot snap = s.read(keys.get(day));
      assertEquals(List.of(DATES[day]), snap.key().values());
      assertEquals(List.of(FEATURES), snap.features());
      SnapshotEntry e = snap.entries().get(0);
      long expectedRows = 700 + 40 * day;
      assertEquals(expectedRows, e.rowsRead());
      assertEquals(expectedRows, e.rowsUsed() + spark.read().parquet(table.toString())
          .where("date = '" + DATES[day] + "' and latency_ms is null").count());
      assertEquals(e.rowsUsed(), e.n());
    }
  }

  @Test
  void aRefitOfThreeDaysEqualsTheDataFitOfThoseDaysAndCommonsMath() throws Exception {
    String where = "date >= '2026-11-02' and date <= '2026-11-04'";
    for (String scaling : List.of("none", "standardize")) {
      Path fromSnaps = dir.resolve("refit-" + scaling);
      Path fromData = dir.resolve("data-" + scaling);
      RunResult a = run("input.snapshots = \"" + store + "\"\ninput.where = \"" + where + "\"\nprepare.scaling = "
          + scaling + "\nreduce.components = 3\noutput.path = \"" + fromSnaps + "\"\n");
      RunResult b = run("input.path = \"" + table + "\"\ninput.where = \"" + where + "\"\nprepare.scaling = "
          + scaling + "\nreduce.components = 3\nfeatures.keys = [host]\noutput.path = \"" + fromData + "\"\n");
      PcaModel ma = a.model();
      PcaModel mb = b.model();
      assertEquals(mb.rows(), ma.rows());
      // same rows, moments merged in another order (keys vs partitions): equal to rounding. Eigenvalues within
      // 1e-12 relative to the largest. Loadings: a perturbation E of the covariance moves eigenvector i by about
      // ||E|| / gap_i (Davis and Kahan 1970); the two merges differ by a few hundred eps * lambda_1 at most (pairwise
      // updates of some 1e3 rows), so the bound is 1e-10 or 512 eps lambda_1 / gap_i, whichever is larger. The
      // unscaled table mixes variances from 1e-2 to 1e12 (gap_i / lambda_1 down to 1e-11): the derived bound
      // rules there; the standardized fit is held to 1e-10.
      double[] ea = ma.eigenvalues();
      double[] eb = mb.eigenvalues();
      for (int i = 0; i < ea.length; i++) {
        assertEquals(eb[i], ea[i], 1e-12 * eb[0], scaling + " eigenvalue " + i);
      }
      int d = FEATURES.length;
      for (int c = 0; c < ma.k(); c++) {
        double gap = Double.POSITIVE_INFINITY;
        for (int i = 0; i < eb.length; i++) {
          if (i != c) {
            gap = Math.min(gap, Math.abs(eb[i] - eb[c]));
          }
        }
        double tol = Math.max(1e-10, 512 * Math.ulp(1.0) * eb[0] / gap);
        if (scaling.equals("standardize")) {
          assertTrue(tol == 1e-10, "the standardized table's gaps keep the bound at 1e-10");
        }
        for (int j = 0; j < d; j++) {
          assertEquals(mb.loading(j, c), ma.loading(j, c), tol, scaling + " loading " + j + " of component " + c);
        }
      }
      for (int j = 0; j < FEATURES.length; j++) {
        assertEquals(mb.means()[j], ma.means()[j], 1e-12 * Math.abs(mb.means()[j]), "mean " + j);
        assertEquals(mb.scales()[j], ma.scales()[j], 1e-11 * mb.scales()[j], "scale " + j);
      }
      // Commons Math 3.6 EigenDecomposition of the covariance (or correlation) of the complete rows, computed here
      double[] reference = referenceEigenvalues(where, scaling.equals("standardize"));
      for (int i = 0; i < reference.length; i++) {
        assertEquals(reference[i], ea[i], 1e-9 * reference[0], scaling + " eigenvalue " + i + " vs Commons Math");
      }
      JsonNode summary = new ObjectMapper().readTree(fromSnaps.resolve("summary.json").toFile());
      assertEquals("snapshots", summary.get("source").asText());
      assertEquals(0, summary.get("rows_read").asLong());
      JsonNode keys = summary.get("snapshots").get("keys");
      assertEquals(3, keys.size());
      assertEquals("2026-11-02", keys.get(0).get("key").get("date").asText());
      assertEquals("2026-11-04", keys.get(2).get("key").get("date").asText());
      assertFalse(summary.get("snapshots").get("written").asBoolean());
      assertTrue(Files.exists(fromSnaps.resolve("model")));
      String report = Files.readString(fromSnaps.resolve("report.html"));
      assertTrue(report.contains("<section id=\"section-snapshots\""), "the report has the snapshots section");
      assertEquals(3, report.split("<g class=\"snapshot-bar\">", -1).length - 1, "one bar per merged day");
    }
  }

  /** Eigenvalues, descending, of the sample covariance (n - 1) or correlation of the complete rows. */
  private static double[] referenceEigenvalues(String where, boolean correlation) {
    List<Row> rows = spark.read().parquet(table.toString()).where(where).selectExpr(castAll()).na().drop()
        .collectAsList();
    int n = rows.size();
    int d = FEATURES.length;
    double[] mean = new double[d];
    for (Row row : rows) {
      for (int j = 0; j < d; j++) {
        mean[j] += row.getDouble(j) / n;
      }
    }
    double[][] c = new double[d][d];
    for (Row row : rows) {
      for (int i = 0; i < d; i++) {
        for (int j = 0; j < d; j++) {
          c[i][j] += (row.getDouble(i) - mean[i]) * (row.getDouble(j) - mean[j]) / (n - 1);
        }
      }
    }
    if (correlation) {
      double[][] r = new double[d][d];
      for (int i = 0; i < d; i++) {
        for (int j = 0; j < d; j++) {
          r[i][j] = c[i][j] / Math.sqrt(c[i][i] * c[j][j]);
        }
      }
      c = r;
    }
    double[] ev = new EigenDecomposition(new Array2DRowRealMatrix(c)).getRealEigenvalues();
    java.util.Arrays.sort(ev);
    double[] desc = new double[d];
    for (int i = 0; i < d; i++) {
      desc[i] = ev[d - 1 - i];
    }
    return desc;
  }

  private static String[] castAll() {
    String[] e = new String[FEATURES.length];
    for (int j = 0; j < e.length; j++) {
      e[j] = "cast(" + FEATURES[j] + " as double) as " + FEATURES[j];
    }
    return e;
  }

  @Test
  void rewritingADayLeavesTheSameStoreAndTheOtherDaysUntouched() {
    SnapshotStore s = openStore();
    Map<SnapshotKey, Snapshot> before = new HashMap<>();
    for (SnapshotKey k : s.select(spark, "")) {
      before.put(k, s.read(k));
    }
    run("input.path = \"" + table + "\"\ninput.where = \"date = '2026-11-03'\"\noutput.snapshots = \"" + store
        + "\"\noutput.path = \"" + dir.resolve("again") + "\"\nfeatures.keys = [host]\n");
    SnapshotStore after = openStore();
    List<SnapshotKey> keys = after.select(spark, "");
    assertEquals(before.keySet(), new java.util.HashSet<>(keys));
    for (SnapshotKey k : keys) {
      SnapshotEntry x = before.get(k).entries().get(0);
      SnapshotEntry y = after.read(k).entries().get(0);
      assertEquals(x.n(), y.n(), k.display());
      assertArrayEquals(bits(x.packedM2()), bits(y.packedM2()), k.display());
      assertArrayEquals(bits(x.mean()), bits(y.mean()), k.display());
      assertArrayEquals(bits(x.shift()), bits(y.shift()), k.display());
      assertArrayEquals(x.missingCells(), y.missingCells(), k.display());
    }
  }

  private static long[] bits(double[] v) {
    long[] b = new long[v.length];
    for (int i = 0; i < v.length; i++) {
      b[i] = Double.doubleToRawLongBits(v[i]);
    }
    return b;
  }

  @Test
  void badInputIsRefusedNamingTheSettingAndTheRule() throws Exception {
    InvalidJobException none = assertThrows(InvalidJobException.class, () -> run("input.snapshots = \"" + store
        + "\"\ninput.where = \"date > '2027-01-01'\"\noutput.path = \"" + dir.resolve("none") + "\"\n"));
    assertTrue(none.getMessage().contains("input.where"), none.getMessage());
    Path notStore = Files.createDirectories(dir.resolve("not-a-store"));
    Files.writeString(notStore.resolve("notes.txt"), "mine");
    InvalidJobException foreign = assertThrows(InvalidJobException.class, () -> run("input.path = \"" + table
        + "\"\noutput.snapshots = \"" + notStore + "\"\noutput.path = \"" + dir.resolve("x1") + "\"\n"));
    assertTrue(foreign.getMessage().contains("output.snapshots") && foreign.getMessage().contains("not a snapshot"
        + " store"), foreign.getMessage());
    assertFalse(Files.exists(dir.resolve("x1")));
    InvalidJobException impute = assertThrows(InvalidJobException.class, () -> run("input.path = \"" + table
        + "\"\noutput.snapshots = \"" + dir.resolve("s2") + "\"\nprepare.missing = impute-mean\noutput.path = \""
        + dir.resolve("x2") + "\"\n"));
    assertTrue(impute.getMessage().contains("prepare.missing = impute-mean"), impute.getMessage());
    InvalidJobException scores = assertThrows(InvalidJobException.class, () -> run("input.snapshots = \"" + store
        + "\"\noutput.scores = true\noutput.path = \"" + dir.resolve("x3") + "\"\n"));
    assertTrue(scores.getMessage().contains("output.scores"), scores.getMessage());
    // a store whose keys hold different feature lists: a later run on one day without one feature
    Path mixed = dir.resolve("mixed");
    run("input.path = \"" + table + "\"\ninput.where = \"date <= '2026-11-02'\"\noutput.snapshots = \"" + mixed
        + "\"\noutput.path = \"" + dir.resolve("m1") + "\"\nfeatures.keys = [host]\n");
    run("input.path = \"" + table + "\"\ninput.where = \"date = '2026-11-03'\"\nfeatures.exclude = [evictions]\n"
        + "output.snapshots = \"" + mixed + "\"\noutput.path = \"" + dir.resolve("m2") + "\"\nfeatures.keys = [host]\n");
    InvalidJobException differ = assertThrows(InvalidJobException.class, () -> run("input.snapshots = \"" + mixed
        + "\"\noutput.path = \"" + dir.resolve("m3") + "\"\n"));
    assertTrue(differ.getMessage().contains("2026-11-03"), differ.getMessage());
    // the two compatible days still fit
    RunResult ok = run("input.snapshots = \"" + mixed + "\"\ninput.where = \"date < '2026-11-03'\"\noutput.path = \""
        + dir.resolve("m4") + "\"\n");
    assertEquals(2, ok.fit().snapshots().keys().size());
  }
}
