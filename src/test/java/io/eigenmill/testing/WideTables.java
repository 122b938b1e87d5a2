package io.eigenmill.testing;

import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;

/** Shapes of the wide test tables (more than a thousand features). */
public final class WideTables {
  private WideTables() {}

  /** A string key {@code host}, then {@code d} double features {@code m0 .. m(d-1)}. */
  public static StructType hostAndFeatures(int d) {
    StructType schema = new StructType().add("host", DataTypes.StringType);
    for (int j = 0; j < d; j++) {
      schema = schema.add("m" + j, DataTypes.DoubleType);
    }
    return schema;
  }
}
