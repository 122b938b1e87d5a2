package io.eigenmill.bench;

import io.eigenmill.engine.FeatureInput;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.StructType;
import org.apache.spark.sql.vectorized.ColumnarBatch;

/**
 * The floors our jobs are measured against: what the engine needs at least to read the same columns (SQL and
 * columnar), and to write a table of the shape of the scores.
 */
final class Floors {
  /** Rows per block of the feature input (the value of reduce.block-rows in reference.conf). */
  static final int BLOCK_ROWS = 1024;

  private Floors() {}

  /** {@code df.agg(sum(c1), ..., sum(cd))}, collected: the d column sums (a null sum, all cells null, is NaN). */
  static double[] sqlSum(Dataset<Row> table, List<String> features) {
    Column[] sums = new Column[features.size()];
    for (int j = 0; j < sums.length; j++) {
      sums[j] = functions.sum(functions.col(quoted(features.get(j))));
    }
    Column[] rest = java.util.Arrays.copyOfRange(sums, 1, sums.length);
    Row r = table.agg(sums[0], rest).first();
    double[] out = new double[sums.length];
    for (int j = 0; j < out.length; j++) {
      out[j] = r.isNullAt(j) ? Double.NaN : ((Number) r.get(j)).doubleValue();
    }
    return out;
  }

  /**
   * The read floor: Spark's columnar Parquet batches of the features, each column summed by {@link ColumnSums}.
   * Returns the d column sums followed by the row count.
   *
   * @throws IllegalStateException when the input has no columnar scan (then our fits read Rows too)
   */
  static double[] readFloor(Dataset<Row> table, List<String> features) {
    return readFloor(table, features, 0);
  }

  /**
   * {@link #readFloor(Dataset, List)} with a Parquet scan cut into splits of {@code splitBytes} (a plan's,
   * {@code JobPlan.splitBytes()}, as the fit reads it), or Spark's own splits for 0.
   */
  static double[] readFloor(Dataset<Row> table, List<String> features, long splitBytes) {
    FeatureInput input = new FeatureInput(table, features, BLOCK_ROWS, splitBytes);
    JavaRDD<ColumnarBatch> batches = input.columnarBatches();
    if (batches == null) {
      throw new IllegalStateException("the table has no columnar Parquet scan for these " + features.size()
          + " features (is spark.sql.codegen.maxFields below the column count?)");
    }
    StructType schema = table.schema();
    int[] kinds = new int[features.size()];
    for (int j = 0; j < kinds.length; j++) {
      kinds[j] = ColumnSums.kindOf(schema.apply(features.get(j)).dataType());
    }
    double[] total = new double[features.size() + 1];
    for (double[] partial : batches.mapPartitions(new ColumnSums(input.batchOrdinals(), kinds)).collect()) {
      for (int j = 0; j < total.length; j++) {
        total[j] += partial[j];
      }
    }
    return total;
  }

  /**
   * A plain Parquet write of a table with the rows and columns of the scores: the key columns read from the table,
   * k + 2 uniform random doubles (as incompressible as real scores) named like them and 2 booleans, partitioned by
   * {@code partitionColumn} like the scores. Overwrites {@code path}.
   */
  static void writeFloor(Dataset<Row> table, List<String> keys, String partitionColumn, int k, String path) {
    List<Column> cols = new ArrayList<>();
    for (String key : keys) {
      cols.add(functions.col(quoted(key)));
    }
    boolean partitioned = List.of(table.columns()).contains(partitionColumn);
    if (partitioned) {
      cols.add(functions.col(quoted(partitionColumn)));
    }
    for (int c = 1; c <= k; c++) {
      cols.add(functions.rand(c).as("pc_" + c));
    }
    cols.add(functions.rand(k + 1).as("t2"));
    cols.add(functions.rand(k + 2).as("q"));
    cols.add(functions.rand(k + 3).lt(0.01).as("flag_t2"));
    cols.add(functions.rand(k + 4).lt(0.01).as("flag_q"));
    var writer = table.select(cols.toArray(new Column[0])).write().mode("overwrite");
    if (partitioned) {
      writer = writer.partitionBy(partitionColumn);
    }
    writer.parquet(path);
  }

  static String quoted(String column) {
    return "`" + column.replace("`", "``") + "`";
  }
}
