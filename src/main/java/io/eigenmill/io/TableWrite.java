package io.eigenmill.io;

import io.eigenmill.engine.SparkLine;
import io.eigenmill.settings.Choices.TableMode;
import java.util.Arrays;
import java.util.List;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.DataFrameWriterV2;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SaveMode;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;

/**
 * Writes one staged row output into one catalog table as one commit of the table's format: in a catalog of its own
 * (e.g. Iceberg) through Spark's table writer, which commits one snapshot, tagged with {@value #RUN_ID}; in Spark's
 * session catalog as a Parquet table of the session's warehouse.
 */
public final class TableWrite {
  /** The snapshot summary property that names the run that wrote the snapshot. */
  public static final String RUN_ID = "eigenmill.run-id";
  /** Spark's setting that makes an overwrite replace only the partitions it writes. */
  static final String PARTITION_OVERWRITE = "spark.sql.sources.partitionOverwriteMode";

  /**
   * What one table got.
   *
   * @param snapshotId the commit's snapshot, or null for a format without snapshots
   */
  public record Written(String table, TableMode mode, long rows, Long snapshotId) {}

  private TableWrite() {}

  /**
   * Writes the Parquet folder {@code staged} into {@code table}, created partitioned by those of
   * {@code partitionColumns} it has when it does not exist.
   */
  public static Written write(SparkSession spark, String staged, String table, TableMode mode,
      List<String> partitionColumns, String runId) {
    Dataset<Row> rows = spark.read().parquet(staged);
    List<String> columns = Arrays.asList(rows.columns());
    String[] parts = partitionColumns.stream().filter(columns::contains).toArray(String[]::new);
    long count = rows.count();
    boolean exists = spark.catalog().tableExists(table);
    if (TableNames.inOwnCatalog(spark, table)) {
      DataFrameWriterV2<Row> writer = rows.writeTo(table).option("snapshot-property." + RUN_ID, runId);
      try {
        commit(writer, exists, mode, parts);
      } catch (RuntimeException e) {
        throw e;
      } catch (Exception e) {
        // the table writer's checked exceptions (which differ between Spark lines), e.g. Spark's AnalysisException
        throw new IllegalStateException(e.getMessage(), e);
      }
      return new Written(table, mode, count, snapshotOf(spark, table, runId));
    }
    if (!exists) {
      rows.write().format("parquet").partitionBy(parts).saveAsTable(table);
    } else if (mode == TableMode.OVERWRITE_PARTITIONS) {
      // dynamic partition overwrite in a copy of the session: the caller's session keeps its own setting
      SparkSession dynamic = SparkLine.cloneSession(spark);
      dynamic.conf().set(PARTITION_OVERWRITE, "dynamic");
      Column[] ordered = Arrays.stream(dynamic.table(table).columns()).map(functions::col).toArray(Column[]::new);
      dynamic.read().parquet(staged).select(ordered).write().mode(SaveMode.Overwrite)
          .option("partitionOverwriteMode", "dynamic").insertInto(table);
    } else {
      rows.write().mode(SaveMode.Append).partitionBy(parts).saveAsTable(table);
    }
    return new Written(table, mode, count, null);
  }

  /** One commit through Spark's table writer: create (partitioned), overwrite the written partitions, or append. */
  private static void commit(DataFrameWriterV2<Row> writer, boolean exists, TableMode mode, String[] parts)
      throws Exception {
    if (!exists) {
      if (parts.length > 0) {
        Column[] rest = Arrays.stream(parts).skip(1).map(functions::col).toArray(Column[]::new);
        writer.partitionedBy(functions.col(parts[0]), rest);
      }
      writer.create();
    } else if (mode == TableMode.OVERWRITE_PARTITIONS) {
      writer.overwritePartitions();
    } else {
      writer.append();
    }
  }

  /** The snapshot of {@code table} that run {@code runId} committed, or null when the table has no snapshots. */
  static Long snapshotOf(SparkSession spark, String table, String runId) {
    try {
      List<Row> found = spark.sql("SELECT snapshot_id FROM " + table + ".snapshots WHERE summary['" + RUN_ID
          + "'] = '" + runId.replace("'", "") + "' ORDER BY committed_at DESC").collectAsList();
      return found.isEmpty() ? null : found.get(0).getLong(0);
    } catch (RuntimeException e) {
      // a catalog whose tables keep no snapshot history
      return null;
    }
  }
}
