package io.eigenmill.plan;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.io.Snapshot;
import io.eigenmill.io.SnapshotEntry;
import io.eigenmill.io.SnapshotKey;
import io.eigenmill.io.SnapshotStore;
import io.eigenmill.math.BlockBudget;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;

/**
 * The snapshot side of planning: the key columns and width a fit that writes snapshots must have
 * ({@code output.snapshots}), and the plan of a fit from a snapshot store ({@code input.snapshots}), whose features
 * and row count come from the selected snapshots instead of a table.
 */
final class SnapshotPlanner {
  private SnapshotPlanner() {}

  /**
   * Checks {@code snapshots.by} (default: the partition columns) against the input and the width against
   * {@link SnapshotPlan#MAX_FEATURES}, and that the fit uses the covariance method; problems are added.
   */
  static SnapshotPlan planWrite(SparkSession spark, JobSettings settings, StructType schema,
      List<String> partitionColumns, List<String> features, MethodChoice.Choice choice, List<String> problems) {
    JobSettings.Output out = settings.output();
    String store = "output.snapshots = " + out.snapshots();
    List<String> by = out.snapshotsBy().isEmpty() ? partitionColumns : out.snapshotsBy();
    String byKey = out.snapshotsBy().isEmpty() ? "snapshots.by (default: the input's partition columns)"
        : "snapshots.by = " + out.snapshotsBy();
    if (by.isEmpty()) {
      problems.add(store + ": the input " + settings.input().source() + " has no partition columns, so snapshots.by"
          + " has no default; set snapshots.by = [column, ...] (e.g. [date])");
    }
    List<String> types = Planner.keyColumnTypes(schema, by, features, byKey, "a snapshot key must not be (exclude"
        + " it with features.exclude)", problems);
    int d = features.size();
    if (d > SnapshotPlan.MAX_FEATURES) {
      problems.add(store + ": " + d + " features; a snapshot keeps d (d + 1) / 2 = " + (long) d * (d + 1) / 2
          + " co-moments (" + MemoryEstimate.human(SnapshotStore.bytesPerSnapshot(d, 0)) + " per key), and"
          + " snapshots are written up to " + SnapshotPlan.MAX_FEATURES + " features; select fewer features or"
          + " remove output.snapshots");
    }
    if (choice != null && choice.method() != Method.COVARIANCE) {
      problems.add(store + ": the fit would use " + choice.method().word() + " (" + choice.reason() + "), and"
          + " snapshots keep the covariance method's moments; set reduce.method = covariance");
    }
    if (by.size() != types.size()) {
      return null;
    }
    return new SnapshotPlan(out.snapshots(), true, new KeyColumns(by, types, zone(spark)),
        SnapshotStore.bytesPerSnapshot(d, 0), List.of(), 0);
  }

  /**
   * The plan of a fit from {@code input.snapshots}: the keys {@code input.where} selects (in key order), checked
   * mergeable; the features are the snapshots' ({@code features.columns} and {@code exclude} select among them).
   */
  static JobPlan planFit(SparkSession spark, JobSettings settings) {
    JobSettings.Input in = settings.input();
    SnapshotStore store = SnapshotStore.open(spark.sparkContext().hadoopConfiguration(), "input.snapshots",
        in.snapshots(), false);
    List<SnapshotKey> keys = store.select(spark, in.where());
    List<Snapshot> snaps = store.readAll(keys);
    Snapshot first = snaps.get(0);
    List<String> problems = new ArrayList<>();
    List<String> notes = new ArrayList<>();
    List<String> warnings = new ArrayList<>(settings.warnings());
    if (!settings.features().keys().isEmpty()) {
      warnings.add("features.keys = " + settings.features().keys() + ": ignored with input.snapshots (a fit from"
          + " snapshots writes no rows, so it passes no key through)");
    }
    StructType schema = new StructType();
    for (int j = 0; j < first.features().size(); j++) {
      schema = schema.add(first.features().get(j), DataType.fromDDL(first.featureTypes().get(j)));
    }
    List<StructField> features = Planner.resolveFeatures(schema, settings.features(), List.of(), problems, notes,
        warnings);
    int d = features.size();
    if (features.isEmpty() && problems.isEmpty()) {
      problems.add("features.columns = " + settings.features().columns() + ": no feature of the snapshots is left"
          + " after features.exclude");
    }
    settings.reduce().components().ifPresent(k -> {
      if (d > 0 && k > d) {
        problems.add("reduce.components = " + k + ": more components than the " + d + " features");
      }
    });
    MethodChoice.Choice choice = null;
    if (d > 0) {
      MemoryEstimate m = MethodChoice.estimate(Method.COVARIANCE, d, 0, BlockBudget.rows(settings.reduce().blockRows(), d + 1),
          Planner.driverHeap(spark), Planner.taskHeap(spark));
      if (!m.fits()) {
        problems.add("input.snapshots = " + in.snapshots() + ": merging " + d + " features needs " + m.describe()
            + "; raise spark.driver.memory");
      }
      choice = new MethodChoice.Choice(Method.COVARIANCE, "input.snapshots: the eigendecomposition of the merged"
          + " covariance of " + keys.size() + " snapshot" + (keys.size() > 1 ? "s" : "") + ", reading no rows", m);
    }
    if (!problems.isEmpty()) {
      throw new InvalidJobException(problems);
    }
    long rows = 0;
    for (Snapshot s : snaps) {
      for (SnapshotEntry e : s.entries()) {
        rows += e.rowsUsed();
      }
    }
    List<String> names = features.stream().map(StructField::name).toList();
    List<String> types = features.stream().map(f -> f.dataType().simpleString()).toList();
    SnapshotPlan plan = new SnapshotPlan(in.snapshots(), false, new KeyColumns(first.key().columns(),
        first.key().types(), zone(spark)), SnapshotStore.bytesPerSnapshot(first.features().size(), 0), keys, rows,
        List.copyOf(snaps));
    return new JobPlan(settings, "fit from snapshots", names, types, List.of(), List.of(), rows, -1,
        Method.COVARIANCE, choice.reason(), choice.memory(), Planner.outputs(settings), notes, warnings, null, plan);
  }

  private static String zone(SparkSession spark) {
    return spark.conf().get("spark.sql.session.timeZone");
  }
}
