package io.eigenmill.io;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.util.List;
import java.util.UUID;
import org.apache.hadoop.fs.FileSystem;
import org.apache.hadoop.fs.Path;
import org.apache.hadoop.mapreduce.Job;
import org.apache.hadoop.mapreduce.TaskAttemptContext;
import org.apache.hadoop.mapreduce.TaskAttemptID;
import org.apache.hadoop.mapreduce.task.TaskAttemptContextImpl;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.catalyst.CatalystTypeConverters;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.plans.logical.LocalRelation;
import org.apache.spark.sql.catalyst.plans.logical.LogicalPlan;
import org.apache.spark.sql.catalyst.plans.logical.Repartition;
import org.apache.spark.sql.execution.datasources.OutputWriter;
import org.apache.spark.sql.execution.datasources.OutputWriterFactory;
import org.apache.spark.sql.execution.datasources.parquet.ParquetFileFormat;
import org.apache.spark.sql.types.StructType;
import scala.Function1;
import scala.collection.JavaConverters;

/**
 * Writes small tables (a model, its loadings and spectrum, centroids, profiles, drift measures) as one Parquet file
 * each from the driver, without a Spark job: a job per table costs about a second of scheduling and of its commit
 * protocol, several times the writing itself. The file is written by Spark's own Parquet writer (the output writer
 * that {@link ParquetFileFormat#prepareWrite} configures from the session's settings: codec, timestamp type, legacy
 * format), so its schema, footer metadata (the Spark schema, column metadata included) and values are those a
 * {@code coalesce(1).write().parquet(path)} gives, and Spark reads the folder back exactly as before, rows in order.
 *
 * <p>The file goes through the Hadoop file system of {@code path} (local, HDFS, object stores), into a folder that
 * must not exist yet (as with Spark's default save mode), followed by a {@code _SUCCESS} marker. Tables of more than
 * {@link #MAX_ROWS} rows, and data frames that are not a list of rows held by the driver, are written by Spark.
 */
public final class DriverTables {
  /** The most rows written from the driver: 2^20 (a million rows of a few columns, tens of MB at most). */
  public static final int MAX_ROWS = 1 << 20;

  private DriverTables() {}

  /** Writes {@code rows} (external rows matching {@code schema}) as the Parquet table {@code path}. */
  public static void write(SparkSession spark, StructType schema, List<Row> rows, String path) {
    if (rows.size() > MAX_ROWS) {
      spark.createDataFrame(rows, schema).coalesce(1).write().parquet(path);
      return;
    }
    Function1<Object, Object> toInternal = CatalystTypeConverters.createToCatalystConverter(schema);
    Writer w = new Writer(spark, schema, path);
    try {
      for (Row r : rows) {
        w.write((InternalRow) toInternal.apply(r));
      }
    } catch (RuntimeException | Error e) {
      w.abandon();
      throw e;
    }
    w.close();
  }

  /**
   * Writes {@code table} as the Parquet table {@code path}: from the driver when it is a list of at most
   * {@link #MAX_ROWS} rows held by the driver (a {@code createDataFrame} of rows, maybe projected or coalesced), by
   * Spark (one file) otherwise.
   */
  public static void write(SparkSession spark, Dataset<Row> table, String path) {
    List<InternalRow> rows = localRows(table);
    if (rows == null || rows.size() > MAX_ROWS) {
      table.coalesce(1).write().parquet(path);
      return;
    }
    Writer w = new Writer(spark, table.schema(), path);
    try {
      for (InternalRow r : rows) {
        w.write(r);
      }
    } catch (RuntimeException | Error e) {
      w.abandon();
      throw e;
    }
    w.close();
  }

  /** The rows of {@code table} when its optimized plan is rows held by the driver (no job to compute them). */
  static List<InternalRow> localRows(Dataset<Row> table) {
    LogicalPlan plan = table.queryExecution().optimizedPlan();
    while (plan instanceof Repartition r && !r.shuffle()) {
      plan = r.child();
    }
    if (!(plan instanceof LocalRelation local) || plan.output().size() != table.schema().size()) {
      return null;
    }
    return JavaConverters.seqAsJavaList(local.data());
  }

  /** One Parquet file of a table and its folder's success marker, written on close. */
  private static final class Writer {
    private final OutputWriter out;
    private final FileSystem fs;
    private final Path folder;

    Writer(SparkSession spark, StructType schema, String path) {
      try {
        Job job = Job.getInstance(spark.sparkContext().hadoopConfiguration());
        folder = new Path(path);
        fs = folder.getFileSystem(job.getConfiguration());
        if (fs.exists(folder)) {
          throw new IOException("the folder already exists");
        }
        OutputWriterFactory factory = new ParquetFileFormat().prepareWrite(spark, job,
            scala.collection.immutable.Map$.MODULE$.<String, String>empty(), schema);
        TaskAttemptContext context = new TaskAttemptContextImpl(job.getConfiguration(), new TaskAttemptID());
        String file = "part-00000-" + UUID.randomUUID() + "-c000" + factory.getFileExtension(context);
        out = factory.newInstance(new Path(folder, file).toString(), schema, context);
      } catch (IOException e) {
        throw new UncheckedIOException("cannot write the table " + path, e);
      }
    }

    void write(InternalRow row) {
      out.write(row);
    }

    /** Closes the file and deletes the folder: a failed table leaves nothing behind. */
    void abandon() {
      try {
        out.close();
      } catch (RuntimeException e) {
        // the write's own failure is the one to report
      }
      try {
        fs.delete(folder, true);
      } catch (IOException e) {
        // as above; the folder is in the run's staging area, which the run's abort deletes
      }
    }

    void close() {
      out.close();
      try {
        fs.create(new Path(folder, "_SUCCESS"), false).close();
      } catch (IOException e) {
        throw new UncheckedIOException("cannot write the success marker of " + folder, e);
      }
    }
  }
}
