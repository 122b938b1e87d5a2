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
 * {@code drift/}: one row per measure: {@code principal_angle_deg} (index i), {@code variance_share} (component c,
 * old and new), {@code mean_shift_sd} (feature, old and new mean, shift in old standard deviations).
 */
public final class DriftTable {
  private DriftTable() {}

  public static void write(SparkSession spark, DriftResult drift, String path) {
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < drift.principalAnglesDegrees().length; i++) {
      rows.add(RowFactory.create("principal_angle_deg", i + 1, null, null, null, drift.principalAnglesDegrees()[i]));
    }
    int c = Math.max(drift.varianceShareOld().length, drift.varianceShareNew().length);
    for (int i = 0; i < c; i++) {
      Double old = i < drift.varianceShareOld().length ? drift.varianceShareOld()[i] : null;
      Double now = i < drift.varianceShareNew().length ? drift.varianceShareNew()[i] : null;
      rows.add(RowFactory.create("variance_share", i + 1, null, old, now,
          old != null && now != null ? now - old : null));
    }
    for (DriftResult.MeanShift m : drift.meanShifts()) {
      rows.add(RowFactory.create("mean_shift_sd", null, m.feature(), m.oldMean(), m.newMean(), m.shiftInOldSd()));
    }
    StructType schema = new StructType().add("measure", DataTypes.StringType, false)
        .add("index", DataTypes.IntegerType, true).add("feature", DataTypes.StringType, true)
        .add("old_value", DataTypes.DoubleType, true).add("new_value", DataTypes.DoubleType, true)
        .add("value", DataTypes.DoubleType, true);
    DriverTables.write(spark, schema, rows, path);
  }
}
