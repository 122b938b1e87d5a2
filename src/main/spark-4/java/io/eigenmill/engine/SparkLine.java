package io.eigenmill.engine;

import java.util.ArrayList;
import java.util.Iterator;
import java.util.List;
import org.apache.hadoop.fs.Path;
import org.apache.spark.rdd.RDD;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.plans.logical.LogicalPlan;
import org.apache.spark.sql.execution.CommandExecutionMode;
import org.apache.spark.sql.execution.FileSourceScanExec;
import org.apache.spark.sql.execution.ListingPartition;
import org.apache.spark.sql.execution.QueryExecution;
import org.apache.spark.sql.execution.datasources.FileStatusWithMetadata;
import org.apache.spark.sql.types.StructType;
import scala.collection.JavaConverters;

/**
 * What differs between the Spark lines, Spark 4.x version (src/main/spark-4; the 3.5 line has a class of the same
 * name and methods in src/main/spark-3.5, and the build compiles the one of its line). Each method is the one place
 * the product calls the Spark API it wraps.
 *
 * <p>Spark 4 split the session into an interface ({@code org.apache.spark.sql.SparkSession}) and its in-process
 * implementation ({@code org.apache.spark.sql.classic.SparkSession}), which holds the private[sql] methods used here;
 * every session of an in-process Spark (local, standalone, YARN, Kubernetes) is a classic one.
 */
public final class SparkLine {
  private SparkLine() {}

  private static org.apache.spark.sql.classic.SparkSession classic(SparkSession session) {
    return (org.apache.spark.sql.classic.SparkSession) session;
  }

  /**
   * A DataFrame of {@code rows}, already in Spark's internal form, with {@code schema} (rows must match it: nothing
   * is checked or converted). The session's {@code internalCreateDataFrame} (private[sql] in Scala, hence public in
   * the bytecode) wraps the rows as they are, where the public {@code createDataFrame} would need {@code Row}s and a
   * conversion of every value.
   */
  public static Dataset<Row> fromInternalRows(SparkSession spark, RDD<InternalRow> rows, StructType schema) {
    return classic(spark).internalCreateDataFrame(rows, schema, false);
  }

  /**
   * A copy of {@code session}: the same SparkContext and cache, its SQL settings as they are now
   * ({@code cloneSession}, private[sql] in Scala, hence public in the bytecode; unlike {@code newSession} it keeps
   * the runtime settings).
   */
  public static SparkSession cloneSession(SparkSession session) {
    return classic(session).cloneSession();
  }

  /**
   * The files {@code scan} reads after partition pruning, one list per partition folder selected (Spark 4 lists
   * them through a {@code ScanFileListing} where 3.5 had an array of partition directories).
   */
  public static List<List<Path>> selectedFiles(FileSourceScanExec scan) {
    List<List<Path>> out = new ArrayList<>();
    Iterator<ListingPartition> partitions = JavaConverters.asJavaIterator(scan.selectedPartitions()
        .filePartitionIterator());
    while (partitions.hasNext()) {
      List<Path> files = new ArrayList<>();
      Iterator<FileStatusWithMetadata> in = JavaConverters.asJavaIterator(partitions.next().files());
      while (in.hasNext()) {
        files.add(in.next().getPath());
      }
      out.add(files);
    }
    return out;
  }

  /**
   * The query execution of a logical plan the caller built ({@code sessionState().executePlan}, private[sql] in Scala,
   * hence public in the bytecode), without the Dataset that would wrap it: no row encoder is built.
   */
  public static QueryExecution executePlan(SparkSession session, LogicalPlan plan) {
    return classic(session).sessionState().executePlan(plan, CommandExecutionMode.ALL());
  }
}
