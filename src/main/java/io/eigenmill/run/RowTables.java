package io.eigenmill.run;

import io.eigenmill.io.OutputCommit;
import io.eigenmill.io.TableNames;
import io.eigenmill.io.TableNames.RowOutput;
import io.eigenmill.io.TableWrite;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.settings.Choices.TableMode;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.UUID;
import org.apache.hadoop.fs.Path;
import org.apache.spark.sql.SparkSession;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The row outputs written as catalog tables ({@code output.table-prefix}), after the run has succeeded and its
 * folder outputs are staged: from the staged Parquet, one commit per table, in {@link TableNames#ROW_OUTPUTS}'
 * order. There is no transaction across tables: when a later table's commit fails, the error names the tables
 * already committed and their snapshots.
 */
final class RowTables {
  private static final Logger LOG = LoggerFactory.getLogger(RowTables.class);

  private RowTables() {}

  /** With {@code fail-if-exists}: refuses, before any work, when a table the job would write exists (exit 2). */
  static void refuseExisting(SparkSession spark, JobSettings settings) {
    if (settings.output().writesTables()) {
      refuseExisting(spark, settings.output(), TableNames.expected(settings));
    }
  }

  private static void refuseExisting(SparkSession spark, JobSettings.Output output, List<RowOutput> outputs) {
    if (output.tableMode() != TableMode.FAIL_IF_EXISTS) {
      return;
    }
    List<String> existing = new ArrayList<>();
    for (RowOutput o : outputs) {
      String table = TableNames.table(output.tablePrefix(), o);
      if (spark.catalog().tableExists(table)) {
        existing.add(table);
      }
    }
    if (!existing.isEmpty()) {
      throw new InvalidJobException("output.table-mode = fail-if-exists: " + String.join(", ", existing)
          + (existing.size() == 1 ? " exists" : " exist") + " (output.table-prefix = " + output.tablePrefix()
          + "); set output.table-mode = append or overwrite-partitions, or choose another prefix");
    }
  }

  /**
   * Writes every staged row output as its table and returns what each got, for summary.json's {@code tables}
   * block (empty without {@code output.table-prefix}).
   */
  static List<TableWrite.Written> write(SparkSession spark, JobPlan plan, OutputCommit out) {
    JobSettings.Output output = plan.settings().output();
    if (!output.writesTables()) {
      return List.of();
    }
    List<RowOutput> staged = new ArrayList<>();
    for (RowOutput o : stagedOutputs(spark, out)) {
      staged.add(o);
    }
    // every table is checked before any is written
    refuseExisting(spark, output, staged);
    String runId = UUID.randomUUID().toString();
    List<TableWrite.Written> written = new ArrayList<>();
    for (RowOutput o : staged) {
      String table = TableNames.table(output.tablePrefix(), o);
      try {
        TableWrite.Written w = TableWrite.write(spark, out.staged(o.folder()), table, output.tableMode(),
            plan.partitionColumns(), runId);
        written.add(w);
        LOG.info("run: table {} {}: {} rows{}", table, output.tableMode().word(), w.rows(),
            w.snapshotId() == null ? "" : ", snapshot " + w.snapshotId());
      } catch (Exception e) {
        // Exception: Spark's AnalysisException is a checked exception thrown from Scala
        throw new IllegalStateException("output.table-prefix: writing table " + table + " failed ("
            + e.getMessage() + "); " + (written.isEmpty() ? "no table was committed"
            : "already committed, not rolled back (no transaction spans tables): " + committed(written)), e);
      }
    }
    return written;
  }

  private static String committed(List<TableWrite.Written> written) {
    List<String> named = new ArrayList<>();
    for (TableWrite.Written w : written) {
      named.add(w.table() + (w.snapshotId() == null ? "" : " snapshot " + w.snapshotId()));
    }
    return String.join(", ", named);
  }

  /** The row outputs present in the staging folder. */
  private static List<RowOutput> stagedOutputs(SparkSession spark, OutputCommit out) {
    List<RowOutput> present = new ArrayList<>();
    for (RowOutput o : TableNames.ROW_OUTPUTS) {
      Path folder = new Path(out.staged(o.folder()));
      try {
        if (folder.getFileSystem(spark.sparkContext().hadoopConfiguration()).exists(folder)) {
          present.add(o);
        }
      } catch (IOException e) {
        throw new UncheckedIOException("cannot look at " + folder, e);
      }
    }
    return present;
  }

  /** The {@code tables} block of summary.json: per table its name, mode, rows written and snapshot. */
  static List<Map<String, Object>> summary(List<TableWrite.Written> written) {
    List<Map<String, Object>> out = new ArrayList<>();
    for (TableWrite.Written w : written) {
      Map<String, Object> m = new LinkedHashMap<>();
      m.put("table", w.table());
      m.put("mode", w.mode().word());
      m.put("rows", w.rows());
      m.put("snapshot_id", w.snapshotId());
      out.add(m);
    }
    return out;
  }
}
