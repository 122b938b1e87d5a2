package io.eigenmill.engine;

import io.eigenmill.math.SeedStream;
import java.io.Serializable;
import org.apache.spark.sql.catalyst.CatalystTypeConverters;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.expressions.XXH64;
import org.apache.spark.sql.types.BinaryType;
import org.apache.spark.sql.types.BooleanType;
import org.apache.spark.sql.types.ByteType;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DateType;
import org.apache.spark.sql.types.DecimalType;
import org.apache.spark.sql.types.DoubleType;
import org.apache.spark.sql.types.FloatType;
import org.apache.spark.sql.types.IntegerType;
import org.apache.spark.sql.types.LongType;
import org.apache.spark.sql.types.ShortType;
import org.apache.spark.sql.types.StringType;
import org.apache.spark.sql.types.TimestampNTZType;
import org.apache.spark.sql.types.TimestampType;
import org.apache.spark.unsafe.Platform;
import org.apache.spark.unsafe.types.UTF8String;

/**
 * A 64-bit hash of some columns of a row, computed from Spark's internal values (UTF8String bytes, microseconds,
 * days, ...) so that the columnar and the row reader give the same number for the same values, with no conversion to
 * Java objects for the usual key types. Each column's hash is folded in with the SplitMix64 finaliser; a null has a
 * hash of its own. Columns of other types (arrays, maps, structs) are hashed from their external value's text.
 */
public final class KeyHash implements Serializable {
  private static final long serialVersionUID = 1L;
  private static final long GOLDEN = 0x9e3779b97f4a7c15L;
  private static final long NULL = 0x5bd1e9955bd1e995L;
  private static final long BYTES_SEED = 42;

  private static final int INTEGRAL = 0;
  private static final int LONG = 1;
  private static final int FLOAT = 2;
  private static final int DOUBLE = 3;
  private static final int STRING = 4;
  private static final int BINARY = 5;
  private static final int BOOLEAN = 6;
  private static final int DECIMAL = 7;
  private static final int OTHER = 8;

  private final int[] ordinals;
  private final DataType[] types;
  private final int[] codes;

  /** Hashes the columns at {@code ordinals} of a row, of {@code types}. */
  public KeyHash(int[] ordinals, DataType[] types) {
    this.ordinals = ordinals.clone();
    this.types = types.clone();
    this.codes = new int[types.length];
    for (int c = 0; c < types.length; c++) {
      codes[c] = codeOf(types[c]);
    }
  }

  private static int codeOf(DataType t) {
    if (t instanceof IntegerType || t instanceof ShortType || t instanceof ByteType || t instanceof DateType) {
      return INTEGRAL;
    } else if (t instanceof LongType || t instanceof TimestampType || t instanceof TimestampNTZType) {
      return LONG;
    } else if (t instanceof FloatType) {
      return FLOAT;
    } else if (t instanceof DoubleType) {
      return DOUBLE;
    } else if (t instanceof StringType) {
      return STRING;
    } else if (t instanceof BinaryType) {
      return BINARY;
    } else if (t instanceof BooleanType) {
      return BOOLEAN;
    } else if (t instanceof DecimalType) {
      return DECIMAL;
    }
    return OTHER;
  }

  public long of(InternalRow row) {
    long h = GOLDEN;
    for (int c = 0; c < ordinals.length; c++) {
      h = SeedStream.mix(h + GOLDEN + column(row, c));
    }
    return h;
  }

  private long column(InternalRow row, int c) {
    int o = ordinals[c];
    if (row.isNullAt(o)) {
      return NULL;
    }
    switch (codes[c]) {
      case INTEGRAL:
        return integral(row, o, types[c]);
      case LONG:
        return row.getLong(o);
      case FLOAT:
        return Float.floatToIntBits(row.getFloat(o));
      case DOUBLE:
        return Double.doubleToLongBits(row.getDouble(o));
      case STRING:
        UTF8String s = row.getUTF8String(o);
        return XXH64.hashUnsafeBytes(s.getBaseObject(), s.getBaseOffset(), s.numBytes(), BYTES_SEED);
      case BINARY:
        byte[] b = row.getBinary(o);
        return XXH64.hashUnsafeBytes(b, Platform.BYTE_ARRAY_OFFSET, b.length, BYTES_SEED);
      case BOOLEAN:
        return row.getBoolean(o) ? 1 : 2;
      case DECIMAL:
        DecimalType dt = (DecimalType) types[c];
        return row.getDecimal(o, dt.precision(), dt.scale()).toJavaBigDecimal().hashCode();
      default:
        Object external = CatalystTypeConverters.convertToScala(row.get(o, types[c]), types[c]);
        return String.valueOf(external).hashCode();
    }
  }

  private static long integral(InternalRow row, int o, DataType t) {
    if (t instanceof ShortType) {
      return row.getShort(o);
    } else if (t instanceof ByteType) {
      return row.getByte(o);
    }
    return row.getInt(o);
  }
}
