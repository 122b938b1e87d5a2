package io.eigenmill.engine;

import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.Decimal;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarArray;
import org.apache.spark.sql.vectorized.ColumnarMap;
import org.apache.spark.unsafe.types.UTF8String;

/**
 * One kept column of doubles ({@link KeptBatches}): rows {@code 0 .. n-1} at {@code values[start .. start + n - 1]}
 * of an array that the batch's other columns share. One array per batch instead of two per column: the kept batches
 * are allocated as a few large arrays, which the collector places outside the young generation and never copies,
 * instead of tens of thousands of small ones that every young collection of the first pass copies again.
 *
 * <p>A null cell is kept as NaN and the column reports no null: passes over kept batches read every column as
 * doubles, and a pass treats a null double and a NaN alike (both are a missing cell, whose value is replaced:
 * {@code ColumnBlock.markMissing}), so the kept batches need no null flags. Only the double getter is served.
 */
final class KeptColumn extends ColumnVector {
  private final double[] values;
  private final int start;

  KeptColumn(double[] values, int start) {
    super(DataTypes.DoubleType);
    this.values = values;
    this.start = start;
  }

  /** The shared array; row r is at {@link #start()} + r. */
  double[] values() {
    return values;
  }

  int start() {
    return start;
  }

  @Override
  public boolean hasNull() {
    return false;
  }

  @Override
  public int numNulls() {
    return 0;
  }

  @Override
  public boolean isNullAt(int rowId) {
    return false;
  }

  @Override
  public double getDouble(int rowId) {
    return values[start + rowId];
  }

  @Override
  public void close() {}

  private static UnsupportedOperationException onlyDoubles() {
    return new UnsupportedOperationException("a kept column serves doubles only");
  }

  @Override
  public boolean getBoolean(int rowId) {
    throw onlyDoubles();
  }

  @Override
  public byte getByte(int rowId) {
    throw onlyDoubles();
  }

  @Override
  public short getShort(int rowId) {
    throw onlyDoubles();
  }

  @Override
  public int getInt(int rowId) {
    throw onlyDoubles();
  }

  @Override
  public long getLong(int rowId) {
    throw onlyDoubles();
  }

  @Override
  public float getFloat(int rowId) {
    throw onlyDoubles();
  }

  @Override
  public ColumnarArray getArray(int rowId) {
    throw onlyDoubles();
  }

  @Override
  public ColumnarMap getMap(int ordinal) {
    throw onlyDoubles();
  }

  @Override
  public Decimal getDecimal(int rowId, int precision, int scale) {
    throw onlyDoubles();
  }

  @Override
  public UTF8String getUTF8String(int rowId) {
    throw onlyDoubles();
  }

  @Override
  public byte[] getBinary(int rowId) {
    throw onlyDoubles();
  }

  @Override
  public ColumnVector getChild(int ordinal) {
    throw onlyDoubles();
  }
}
