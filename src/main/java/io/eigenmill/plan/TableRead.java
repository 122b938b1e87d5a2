package io.eigenmill.plan;

import io.eigenmill.engine.ColumnarScan;
import io.eigenmill.io.CatalogTable;
import io.eigenmill.settings.InputTables;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.execution.FileSourceScanExec;
import org.apache.spark.sql.execution.SparkPlan;
import org.apache.spark.sql.execution.adaptive.AdaptiveSparkPlanExec;
import org.apache.spark.sql.execution.datasources.v2.BatchScanExec;
import org.apache.spark.sql.functions;

/**
 * What the plan says of a catalog table read as input ({@code input.table}): the table, its provider (format), the
 * snapshot read with its time and row count when the format keeps them in metadata tables (Iceberg's
 * {@code <table>.snapshots} and {@code <table>.history}, read from the table's metadata, not its data), its
 * partitioning, and whether the passes read the scan's columnar batches (and why not when they do not).
 *
 * @param snapshotId the snapshot read, or -1 when the format keeps no snapshots (or they cannot be read)
 * @param snapshotTime when that snapshot was committed (as Spark prints a timestamp), or empty
 * @param rows the snapshot's row count from its summary, or -1
 * @param partitioning the catalog's partitioning: column names and transforms, in order
 * @param columnar true when the passes read the scan's columnar batches
 * @param rowsReason why they read rows instead (empty when columnar)
 */
public record TableRead(String table, String asOf, String provider, long snapshotId, String snapshotTime, long rows,
    List<String> partitioning, boolean columnar, String rowsReason) {

  /** The facts of {@code input}'s table, whose rows to read (filtered by {@code input.where}) are {@code kept}. */
  public static TableRead of(SparkSession spark, JobSettings.Input input, Dataset<Row> kept, List<String> features) {
    String name = input.table().strip();
    String provider = CatalogTable.provider(spark, name);
    long id = -1;
    String time = "";
    long rows = -1;
    if (provider.equals("iceberg")) {
      Row snapshot = icebergSnapshot(spark, name, input.asOf().strip());
      if (snapshot != null) {
        id = snapshot.getLong(0);
        time = snapshot.isNullAt(1) ? "" : String.valueOf(snapshot.get(1));
        rows = snapshot.isNullAt(2) ? -1 : parseOr(snapshot.getString(2));
      }
    }
    boolean columnar = !features.isEmpty() && ColumnarScan.select(kept, features) != null;
    String reason = columnar ? "" : features.isEmpty() ? "no feature column" : rowsReason(kept.select(
        features.stream().map(functions::col).toArray(Column[]::new)), input);
    return new TableRead(name, input.asOf().strip(), provider, id, time, rows,
        CatalogTable.partitioning(spark, name), columnar, reason);
  }

  /** The lines {@code plan} prints under the input: label and text. */
  public List<String[]> describe() {
    List<String[]> lines = new ArrayList<>();
    lines.add(new String[] {"table", table + " (" + provider + ")"});
    String snapshot = snapshotId < 0 ? (asOf.isEmpty() ? "the table's current state (no snapshot metadata)"
        : "as of " + asOf) : snapshotId + (snapshotTime.isEmpty() ? "" : ", committed " + snapshotTime)
        + (rows >= 0 ? String.format(Locale.ROOT, ", %,d rows", rows) : "")
        + (asOf.isEmpty() ? " (current)" : " (input.as-of = " + asOf + ")");
    lines.add(new String[] {"snapshot", snapshot});
    lines.add(new String[] {"partitioning", partitioning.isEmpty() ? "none" : String.join(", ", partitioning)});
    lines.add(new String[] {"scan", columnar ? "columnar: the passes read the table scan's columnar batches"
        : "rows, not columnar: " + rowsReason});
    return lines;
  }

  /** The snapshot read (id, committed at, total records), or null when the metadata tables cannot be read. */
  private static Row icebergSnapshot(SparkSession spark, String name, String asOf) {
    String select = "SELECT snapshot_id, committed_at, summary['total-records'] FROM " + name + ".snapshots ";
    try {
      String where;
      switch (InputTables.kind(asOf)) {
        case SNAPSHOT_ID -> where = "WHERE snapshot_id = " + asOf;
        case TIMESTAMP -> where = "WHERE committed_at <= TIMESTAMP '" + InputTables.timestamp(asOf)
            + "' ORDER BY committed_at DESC LIMIT 1";
        default -> where = "WHERE snapshot_id = (SELECT snapshot_id FROM " + name + ".history WHERE"
            + " is_current_ancestor ORDER BY made_current_at DESC LIMIT 1)";
      }
      List<Row> rows = spark.sql(select + where).collectAsList();
      return rows.isEmpty() ? null : rows.get(0);
    } catch (Exception e) { // a catalog without metadata tables: the plan leaves the snapshot out
      return null;
    }
  }

  private static String rowsReason(Dataset<Row> selection, JobSettings.Input input) {
    SparkPlan top = selection.queryExecution().executedPlan();
    if (top instanceof AdaptiveSparkPlanExec) {
      top = ((AdaptiveSparkPlanExec) top).executedPlan();
    }
    List<SparkPlan> scans = new ArrayList<>();
    collectScans(top, scans);
    if (scans.size() != 1) {
      return "the table's plan is not a single scan (" + top.nodeName() + ")";
    }
    SparkPlan scan = scans.get(0);
    if (!scan.supportsColumnar()) {
      return "the table's reader serves rows for these columns (a column type its vectorised reader does not read,"
          + " or vectorised reads turned off for the table)";
    }
    return input.filtered() ? "input.where is evaluated above the scan (Spark filters the rows), so the passes read"
        + " rows" : "operators above the scan (" + top.nodeName() + ") change its columns";
  }

  private static void collectScans(SparkPlan node, List<SparkPlan> out) {
    if (node instanceof BatchScanExec || node instanceof FileSourceScanExec) {
      out.add(node);
      return;
    }
    scala.collection.Iterator<SparkPlan> it = node.children().iterator();
    while (it.hasNext()) {
      collectScans(it.next(), out);
    }
  }

  private static long parseOr(String s) {
    try {
      return Long.parseLong(s.strip());
    } catch (NumberFormatException e) {
      return -1;
    }
  }
}
