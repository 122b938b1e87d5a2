package io.eigenmill.io;

import io.eigenmill.settings.Choices;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.io.IOException;
import org.apache.hadoop.fs.FileStatus;
import org.apache.hadoop.fs.FileSystem;
import org.apache.hadoop.fs.Path;
import org.apache.spark.sql.DataFrameReader;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;

/** Opens the input table lazily (schema only: no data is read here). */
public final class TableLoader {
  /**
   * The {@code input.path} of a job whose input is a Dataset the caller already holds (the Java API): it names the
   * input in messages and is never opened.
   */
  public static final String GIVEN = "(the given Dataset)";

  private TableLoader() {}

  /**
   * The job's input: the table as read, filtered by {@code input.where} when set ({@link InputFilter}) before
   * anything else, so that every job (fit, apply, clustering) sees the same rows. Plans the filter; reads no data.
   */
  public static Dataset<Row> load(SparkSession spark, JobSettings.Input input) {
    return InputFilter.apply(read(spark, input), input);
  }

  /** The table as read, without {@code input.where} (the planner checks the predicate against its schema). */
  public static Dataset<Row> read(SparkSession spark, JobSettings.Input input) {
    if (input.fromTable()) {
      return CatalogTable.read(spark, input);
    }
    requireExists(spark, "input.path", input.path());
    DataFrameReader reader = spark.read();
    if (input.corruptFiles() == Choices.CorruptFiles.SKIP) {
      reader = reader.option("ignoreCorruptFiles", "true");
    }
    try {
      if (input.format() == Choices.InputFormat.CSV) {
        return reader.option("header", "true").option("inferSchema", "true").csv(input.path());
      }
      if (input.corruptFiles() == Choices.CorruptFiles.SKIP) {
        // Spark infers the schema from one file: read only the files whose footers are sound
        InputFiles.Check files = InputFiles.check(spark, input);
        if (!files.unreadable().isEmpty()) {
          return reader.option("basePath", input.path()).parquet(files.readable().toArray(String[]::new));
        }
      }
      return reader.parquet(input.path());
    } catch (InvalidJobException e) {
      throw e;
    } catch (Exception e) { // AnalysisException is checked
      throw new InvalidJobException("input.path = " + input.path() + ": cannot be read as "
          + input.format().word() + ": " + firstLine(e));
    }
  }

  /** Fails with a message naming {@code key} when {@code path} does not exist. */
  public static void requireExists(SparkSession spark, String key, String path) {
    if (!exists(spark, path)) {
      throw new InvalidJobException(key + " = " + path + ": no such file or folder");
    }
  }

  public static boolean exists(SparkSession spark, String path) {
    try {
      Path p = new Path(path);
      FileSystem fs = p.getFileSystem(spark.sparkContext().hadoopConfiguration());
      return fs.exists(p);
    } catch (IOException | IllegalArgumentException e) {
      return false;
    }
  }

  /** Sum of the sizes of the files under {@code path} (bytes), or -1 when it cannot be listed cheaply. */
  public static long sizeBytes(SparkSession spark, String path) {
    if (path.isBlank() || GIVEN.equals(path)) {
      return -1; // a catalog table (input.table), whose size is the catalog's, or a Dataset given through the API
    }
    try {
      Path p = new Path(path);
      FileSystem fs = p.getFileSystem(spark.sparkContext().hadoopConfiguration());
      FileStatus status = fs.getFileStatus(p);
      return status.isDirectory() ? fs.getContentSummary(p).getLength() : status.getLen();
    } catch (IOException e) {
      return -1;
    }
  }

  /**
   * The partition columns of a Parquet input, from the folder names of its first file ({@code name=value}), in
   * folder order; none for CSV.
   */
  public static java.util.List<String> partitionColumns(Dataset<Row> table, JobSettings.Input input) {
    if (input.fromTable()) {
      return new java.util.ArrayList<>(CatalogTable.partitionColumns(table.sparkSession(), input.table().strip()));
    }
    java.util.List<String> out = new java.util.ArrayList<>();
    if (input.format() != Choices.InputFormat.PARQUET || GIVEN.equals(input.path())) {
      return out;
    }
    String[] files = table.inputFiles();
    if (files.length == 0) {
      return out;
    }
    String root = new Path(input.path()).toUri().getPath();
    String file = new Path(files[0]).toUri().getPath();
    int at = file.indexOf(root);
    String rest = at >= 0 ? file.substring(at + root.length()) : file;
    for (String segment : rest.split("/")) {
      int eq = segment.indexOf('=');
      if (eq > 0) {
        out.add(segment.substring(0, eq));
      }
    }
    return out;
  }

  static String firstLine(Throwable e) {
    String m = String.valueOf(e.getMessage());
    int nl = m.indexOf('\n');
    return nl < 0 ? m : m.substring(0, nl);
  }
}
