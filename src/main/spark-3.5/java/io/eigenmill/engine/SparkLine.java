package io.eigenmill.engine;

import java.util.ArrayList;
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
import org.apache.spark.sql.execution.QueryExecution;
import org.apache.spark.sql.execution.datasources.FileStatusWithMetadata;
import org.apache.spark.sql.execution.datasources.PartitionDirectory;
import org.apache.spark.sql.types.StructType;
import scala.collection.JavaConverters;

/**
 * What differs between the Spark lines, Spark 3.5 version (src/main/spark-3.5; the 4.x line has a class of the same
 * name and methods in src/main/spark-4, and the build compiles the one of its line). Each method is the one place
 * the product calls the Spark API it wraps.
 */
public final class SparkLine {
  private SparkLine() {}

  /**
   * A DataFrame of {@code rows}, already in Spark's internal form, with {@code schema} (rows must match it: nothing
   * is checked or converted). The session's {@code internalCreateDataFrame} (private[sql] in Scala, hence public in
   * the bytecode) wraps the rows as they are, where the public {@code createDataFrame} would need {@code Row}s and a
   * conversion of every value.
   */
  public static Dataset<Row> fromInternalRows(SparkSession spark, RDD<InternalRow> rows, StructType schema) {
    return spark.internalCreateDataFrame(rows, schema, false);
  }

  /**
   * A copy of {@code session}: the same SparkContext and cache, its SQL settings as they are now
   * ({@code cloneSession}, private[sql] in Scala, hence public in the bytecode; unlike {@code newSession} it keeps
   * the runtime settings).
   */
  public static SparkSession cloneSession(SparkSession session) {
    return session.cloneSession();
  }

  /** The files {@code scan} reads after partition pruning, one list per partition folder selected. */
  public static List<List<Path>> selectedFiles(FileSourceScanExec scan) {
    List<List<Path>> out = new ArrayList<>();
    for (PartitionDirectory p : scan.selectedPartitions()) {
      List<Path> files = new ArrayList<>();
      for (FileStatusWithMetadata f : JavaConverters.seqAsJavaList(p.files())) {
        files.add(f.getPath());
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
    return session.sessionState().executePlan(plan, CommandExecutionMode.ALL());
  }
}
