package io.eigenmill.io;

import io.eigenmill.settings.InputTables;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;

/**
 * A catalog table as the job's input ({@code input.table}): Spark resolves the name through the catalogs configured
 * in the session, so any table format with a Spark catalog serves. A snapshot ({@code input.as-of}) is read through
 * SQL time travel ({@code VERSION AS OF} / {@code TIMESTAMP AS OF}): reader options such as a snapshot id are not
 * passed to a table resolved by name on every Spark line, time travel in SQL is. Reading plans the table; no data is
 * read here.
 */
public final class CatalogTable {
  private CatalogTable() {}

  /** The table (at {@code input.as-of} when set), or one message naming {@code input.table} and the rule. */
  public static Dataset<Row> read(SparkSession spark, JobSettings.Input input) {
    String name = input.table().strip();
    Dataset<Row> current;
    try {
      current = spark.table(name);
    } catch (Exception e) { // AnalysisException is checked
      throw new InvalidJobException("input.table = " + name + ": no such table in the session's catalogs ("
          + TableLoader.firstLine(e) + "); check the name (catalog.db.table) and the catalog's spark.conf settings");
    }
    String asOf = input.asOf().strip();
    if (asOf.isEmpty()) {
      return current;
    }
    InputTables.AsOfKind kind = InputTables.kind(asOf);
    String sql = "SELECT * FROM " + name + (kind == InputTables.AsOfKind.SNAPSHOT_ID ? " VERSION AS OF " + asOf
        : " TIMESTAMP AS OF '" + InputTables.timestamp(asOf) + "'");
    try {
      return spark.sql(sql);
    } catch (Exception e) {
      String m = TableLoader.firstLine(e);
      String lower = m.toLowerCase(Locale.ROOT);
      if (lower.contains("time travel") || lower.contains("time_travel")) {
        throw new InvalidJobException("input.as-of = " + asOf + ": input.table = " + name + " (" + provider(spark,
            name) + ") keeps no history, so it has no snapshot to read; remove input.as-of");
      }
      throw new InvalidJobException("input.as-of = " + asOf + ": input.table = " + name + " has no such snapshot ("
          + m + "); give the id of one of its snapshots or a time at or after its first commit");
    }
  }

  /** The table's provider (format) as its catalog describes it, lower case, or "unknown provider". */
  public static String provider(SparkSession spark, String name) {
    for (Row r : describe(spark, name)) {
      if ("Provider".equalsIgnoreCase(text(r, 0).strip())) {
        return text(r, 1).strip().toLowerCase(Locale.ROOT);
      }
    }
    return "unknown provider";
  }

  /**
   * The table's partitioning as its catalog describes it: a column name for a partition by value, a transform
   * (e.g. {@code bucket(4, host)}, {@code days(time)}) otherwise; empty when the table is not partitioned.
   */
  public static List<String> partitioning(SparkSession spark, String name) {
    List<String> out = new ArrayList<>();
    boolean v2 = false;
    boolean v1 = false;
    for (Row r : describe(spark, name)) {
      String col = text(r, 0).strip();
      if (col.equals("# Partitioning")) {
        v2 = true;
        continue;
      }
      if (col.equals("# Partition Information")) {
        v1 = true;
        continue;
      }
      if (v2) {
        if (!col.startsWith("Part ")) {
          v2 = false;
        } else {
          out.add(text(r, 1).strip());
        }
      } else if (v1) {
        if (col.equals("# col_name")) {
          continue;
        }
        if (col.isEmpty() || col.startsWith("#")) {
          v1 = false;
        } else {
          out.add(col);
        }
      }
    }
    return out;
  }

  /** The partition columns of the table by value (identity partitions), for keys and snapshots. */
  public static List<String> partitionColumns(SparkSession spark, String name) {
    return partitioning(spark, name).stream().filter(p -> !p.contains("(")).toList();
  }

  private static List<Row> describe(SparkSession spark, String name) {
    try {
      return spark.sql("DESCRIBE TABLE EXTENDED " + name).collectAsList();
    } catch (Exception e) {
      return List.of();
    }
  }

  private static String text(Row r, int i) {
    return r.isNullAt(i) ? "" : r.getString(i);
  }
}
