package io.eigenmill.monitor;

import io.eigenmill.io.DriverTables;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;

/**
 * {@code data-drift/}: the new rows against the model, one row per measure with columns {@code measure},
 * {@code component} (1-based, or null), {@code feature} (or null), {@code model_value}, {@code new_value},
 * {@code value}:
 * <ul>
 *   <li>{@code mean_shift_sd} per feature: model mean, new mean, (new - model) / model sd;
 *   <li>{@code variance_ratio} per feature: model variance, new variance, new / model;
 *   <li>{@code score_variance_ratio} per component: eigenvalue, new variance of the score, new / eigenvalue;
 *   <li>{@code score_mean_sd} per component: 0 (the fitted rows' mean score), new mean score, mean / sqrt(eigenvalue);
 *   <li>{@code variance_share} per component: the model's and the new rows' share of their total variance, new - model;
 *   <li>{@code inside_share}, {@code outside_share}: the same in and outside the subspace, new - model;
 *   <li>{@code total_variance}: model and new total variance (prepared units), new / model.
 * </ul>
 */
public final class DataDriftTable {
  private DataDriftTable() {}

  public static void write(SparkSession spark, DataDriftResult r, String path) {
    List<Row> rows = new ArrayList<>();
    for (DataDriftResult.FeatureDrift f : r.features()) {
      rows.add(RowFactory.create("mean_shift_sd", null, f.feature(), f.modelMean(), f.newMean(), f.meanShiftSd()));
    }
    for (DataDriftResult.FeatureDrift f : r.features()) {
      rows.add(RowFactory.create("variance_ratio", null, f.feature(), f.modelSd() * f.modelSd(), f.newSd() * f.newSd(),
          f.varianceRatio()));
    }
    for (DataDriftResult.ComponentDrift c : r.components()) {
      rows.add(RowFactory.create("score_variance_ratio", c.component(), null, c.eigenvalue(), c.newVariance(),
          c.varianceRatio()));
      rows.add(RowFactory.create("score_mean_sd", c.component(), null, 0.0,
          c.scoreMeanSd() * Math.sqrt(c.eigenvalue()), c.scoreMeanSd()));
      rows.add(RowFactory.create("variance_share", c.component(), null, c.modelShare(), c.newShare(),
          c.newShare() - c.modelShare()));
    }
    rows.add(RowFactory.create("inside_share", null, null, r.modelInsideShare(), r.newInsideShare(),
        r.newInsideShare() - r.modelInsideShare()));
    rows.add(RowFactory.create("outside_share", null, null, r.modelOutsideShare(), r.newOutsideShare(),
        r.newOutsideShare() - r.modelOutsideShare()));
    rows.add(RowFactory.create("total_variance", null, null, r.modelTotalVariance(), r.newTotalVariance(),
        r.totalVarianceRatio()));
    StructType schema = new StructType().add("measure", DataTypes.StringType, false)
        .add("component", DataTypes.IntegerType, true).add("feature", DataTypes.StringType, true)
        .add("model_value", DataTypes.DoubleType, true).add("new_value", DataTypes.DoubleType, true)
        .add("value", DataTypes.DoubleType, true);
    DriverTables.write(spark, schema, rows, path);
  }
}
