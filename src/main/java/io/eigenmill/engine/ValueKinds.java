package io.eigenmill.engine;

import org.apache.spark.sql.types.ByteType;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DecimalType;
import org.apache.spark.sql.types.DoubleType;
import org.apache.spark.sql.types.FloatType;
import org.apache.spark.sql.types.IntegerType;
import org.apache.spark.sql.types.LongType;
import org.apache.spark.sql.types.ShortType;

/**
 * Codes of the numeric column types that columnar readers switch on once per column (outside the per-value loop):
 * the block readers of the passes and the benchmark's read floor share them.
 */
public final class ValueKinds {
  public static final int DOUBLE = 0;
  public static final int FLOAT = 1;
  public static final int INT = 2;
  public static final int LONG = 3;
  public static final int SHORT = 4;
  public static final int BYTE = 5;
  public static final int DECIMAL = 6;

  private ValueKinds() {}

  /** The code of a numeric Spark type, or -1 when the type is not numeric. */
  public static int kindOf(DataType type) {
    if (type instanceof DoubleType) {
      return DOUBLE;
    } else if (type instanceof FloatType) {
      return FLOAT;
    } else if (type instanceof IntegerType) {
      return INT;
    } else if (type instanceof LongType) {
      return LONG;
    } else if (type instanceof ShortType) {
      return SHORT;
    } else if (type instanceof ByteType) {
      return BYTE;
    } else if (type instanceof DecimalType) {
      return DECIMAL;
    }
    return -1;
  }
}
