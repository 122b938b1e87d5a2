package io.eigenmill.io;

import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.SparkSession;

/**
 * The row outputs a run may also write as catalog tables ({@code output.table-prefix}): each output's folder in the
 * staging folder and its table's name, the prefix followed by the output's name ({@code catalog.db.fleet_scores}).
 */
public final class TableNames {
  /** One row output: its name in the table name, and its folder under the output folder. */
  public record RowOutput(String name, String folder) {}

  /** Every row output, in the order their tables are committed. */
  public static final List<RowOutput> ROW_OUTPUTS = List.of(new RowOutput("scores", "scores"),
      new RowOutput("reconstruction", "reconstruction"), new RowOutput("assignments", "clusters/assignments"),
      new RowOutput("labels", "labels"), new RowOutput("row_labels", "row-labels"));

  private TableNames() {}

  /** The table of {@code output}: the prefix followed by its name. */
  public static String table(String prefix, RowOutput output) {
    return prefix + output.name();
  }

  /** The row outputs these settings lead a run to write (the tables that must not exist with fail-if-exists). */
  public static List<RowOutput> expected(JobSettings settings) {
    boolean labelling = !settings.apply().centroids().isEmpty();
    boolean scoring = settings.apply().appliesModel() || settings.output().scores() || settings.cluster().enabled()
        || labelling;
    List<RowOutput> out = new ArrayList<>();
    for (RowOutput o : ROW_OUTPUTS) {
      boolean written = switch (o.name()) {
        case "scores" -> scoring;
        case "reconstruction" -> settings.output().reconstruction();
        case "assignments" -> settings.cluster().enabled();
        case "labels" -> labelling;
        default -> labelling && settings.apply().labelRows();
      };
      if (written) {
        out.add(o);
      }
    }
    return out;
  }

  /**
   * True when {@code table} is in a catalog of its own ({@code spark.sql.catalog.NAME} set, e.g. an Iceberg
   * catalog), false when it is in Spark's session catalog ({@code spark_catalog}, or no catalog named).
   */
  public static boolean inOwnCatalog(SparkSession spark, String table) {
    String[] parts = table.split("\\.");
    return parts.length >= 2 && !"spark_catalog".equals(parts[0])
        && spark.conf().contains("spark.sql.catalog." + parts[0]);
  }
}
