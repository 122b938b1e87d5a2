package io.eigenmill.monitor;

import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.expressions.GenericInternalRow;
import org.apache.spark.sql.catalyst.util.ArrayData;
import org.apache.spark.sql.catalyst.util.MapData;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.Decimal;
import org.apache.spark.unsafe.types.CalendarInterval;
import org.apache.spark.unsafe.types.UTF8String;

/**
 * A scored row as a view: pass-through columns read from the source row in their internal form, the scores and
 * flags from the scored block ({@link ScoreBlocks#statistic}, {@link ScoreBlocks#flag}). Read-only; reused for every
 * row of a partition: valid until the next row is asked for ({@link #copy} makes an independent one). No copy and no
 * allocation per row.
 *
 * <p>It extends Spark's generic row rather than the bare {@code InternalRow}: every getter a Spark version adds
 * (4.x added {@code getVariant}, {@code getBinaryView}...) then has an implementation, the generic one through
 * {@link #genericGet}, so this class compiles and runs unchanged on both Spark lines. The getters the scored columns
 * and the usual pass-through types use are overridden here and never box; only the generic paths (a getter this
 * class does not override, {@link #values}) materialise values.
 */
final class ScoredRow extends GenericInternalRow {
  private static final long serialVersionUID = 1L;
  private final transient ScoreBlocks blocks;
  private final int p;
  private final int width;
  private final int[] passOrdinals;
  private final DataType[] types;
  private final int firstFlag;
  /** With groups, a score beyond a group's k (and every score of an unknown group's row) is null. */
  private final boolean nullableScores;
  private transient InternalRow source;
  private int i;

  ScoredRow(ScoreBlocks blocks) {
    super();
    this.blocks = blocks;
    this.p = blocks.p;
    this.passOrdinals = blocks.passOrdinals;
    this.types = blocks.layout.types();
    int k = blocks.outK;
    this.width = p + (blocks.spec.reconstruct() ? blocks.d : k + 4);
    this.firstFlag = blocks.spec.reconstruct() ? Integer.MAX_VALUE : p + k + 2;
    this.nullableScores = blocks.groups != null;
  }

  void at(InternalRow source, int i) {
    this.source = source;
    this.i = i;
  }

  @Override
  public int numFields() {
    return width;
  }

  @Override
  public boolean isNullAt(int o) {
    if (o < p) {
      return source.isNullAt(passOrdinals[o]);
    }
    return nullableScores && o < firstFlag && Double.isNaN(blocks.statistic(o - p, i));
  }

  @Override
  public boolean getBoolean(int o) {
    return o < p ? source.getBoolean(passOrdinals[o]) : blocks.flag(o - p, i);
  }

  @Override
  public double getDouble(int o) {
    return o < p ? source.getDouble(passOrdinals[o]) : blocks.statistic(o - p, i);
  }

  @Override
  public byte getByte(int o) {
    return source.getByte(passOrdinals[o]);
  }

  @Override
  public short getShort(int o) {
    return source.getShort(passOrdinals[o]);
  }

  @Override
  public int getInt(int o) {
    return source.getInt(passOrdinals[o]);
  }

  @Override
  public long getLong(int o) {
    return source.getLong(passOrdinals[o]);
  }

  @Override
  public float getFloat(int o) {
    return source.getFloat(passOrdinals[o]);
  }

  @Override
  public Decimal getDecimal(int o, int precision, int scale) {
    return source.getDecimal(passOrdinals[o], precision, scale);
  }

  @Override
  public UTF8String getUTF8String(int o) {
    return source.getUTF8String(passOrdinals[o]);
  }

  @Override
  public byte[] getBinary(int o) {
    return source.getBinary(passOrdinals[o]);
  }

  @Override
  public CalendarInterval getInterval(int o) {
    return source.getInterval(passOrdinals[o]);
  }

  @Override
  public InternalRow getStruct(int o, int numFields) {
    return source.getStruct(passOrdinals[o], numFields);
  }

  @Override
  public ArrayData getArray(int o) {
    return source.getArray(passOrdinals[o]);
  }

  @Override
  public MapData getMap(int o) {
    return source.getMap(passOrdinals[o]);
  }

  @Override
  public Object get(int o, DataType type) {
    if (o < p) {
      return source.isNullAt(passOrdinals[o]) ? null : source.get(passOrdinals[o], type);
    }
    if (o >= firstFlag) {
      return blocks.flag(o - p, i);
    }
    return isNullAt(o) ? null : (Object) blocks.statistic(o - p, i);
  }

  /** The value at {@code o} in its internal form: what the generic getters of Spark's row read. */
  @Override
  public Object genericGet(int o) {
    return get(o, o < p ? types[o] : null);
  }

  /**
   * The values of this row, materialised (a new array each call): for code that reads a generic row's array
   * directly.
   */
  @Override
  public Object[] values() {
    Object[] values = new Object[width];
    for (int o = 0; o < width; o++) {
      values[o] = genericGet(o);
    }
    return values;
  }

  /** An independent row with the same values (pass-through values copied). */
  @Override
  public GenericInternalRow copy() {
    Object[] values = new Object[width];
    for (int o = 0; o < width; o++) {
      values[o] = o < p ? InternalRow.copyValue(get(o, types[o])) : get(o, null);
    }
    return new GenericInternalRow(values);
  }

  @Override
  public void setNullAt(int o) {
    throw new UnsupportedOperationException("a scored row is read-only");
  }

  @Override
  public void update(int o, Object value) {
    throw new UnsupportedOperationException("a scored row is read-only");
  }
}
