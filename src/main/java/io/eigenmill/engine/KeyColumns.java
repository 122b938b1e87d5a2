package io.eigenmill.engine;

import java.io.Serializable;
import java.math.BigDecimal;
import java.time.Instant;
import java.time.LocalDate;
import java.time.LocalDateTime;
import java.time.ZoneId;
import java.time.ZoneOffset;
import java.time.format.DateTimeFormatter;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.apache.spark.sql.Row;
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
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.unsafe.types.UTF8String;

/**
 * The key columns of a keyed pass (time-window keys, group columns, or both, in that order) and, per task, a
 * {@link Coder} that gives every row a small key code: a task meets few distinct keys, so each row costs one or two
 * hash lookups (none when the row's key equals the previous row's, the usual case for partition columns and sorted
 * tables), and the text of a key ({@link KeyValues}) is made once per distinct value.
 *
 * <p>The text of a value is what {@code CAST(value AS STRING)} gives in Spark (checked in the tests for each type):
 * the row reader selects the keys cast to string, the columnar reader rebuilds the same text from the column's own
 * representation (days for dates, microseconds for timestamps, unscaled longs for small decimals).
 *
 * @param zone the session time zone, for the text of timestamps
 */
public record KeyColumns(List<String> names, List<String> types, String zone) implements Serializable {
  public KeyColumns {
    names = List.copyOf(names);
    types = List.copyOf(types);
  }

  public int size() {
    return names.size();
  }

  public boolean isEmpty() {
    return names.isEmpty();
  }

  /** Null when {@code type} can be a key column; otherwise the rule, for the caller's message. */
  public static String unsupported(DataType type) {
    boolean ok = type instanceof StringType || type instanceof BooleanType || type instanceof ByteType
        || type instanceof ShortType || type instanceof IntegerType || type instanceof LongType
        || type instanceof DateType || type instanceof TimestampType || type instanceof TimestampNTZType
        || type instanceof DecimalType || type instanceof DoubleType || type instanceof FloatType;
    return ok ? null : "a key column must be a string, boolean, integer, decimal, floating, date or timestamp column,"
        + " not " + type.simpleString();
  }

  /** A new per-task coder (not thread-safe; one per partition). */
  public Coder coder() {
    return new Coder(this);
  }

  /** Gives rows key codes 0, 1, 2, ... in the order their keys first appear. */
  public static final class Coder {
    private final ColumnCoder[] columns;
    private final Map<KeyValues, Integer> byText = new HashMap<>();
    private final Map<CodeTuple, Integer> byCodes = new HashMap<>();
    private final List<KeyValues> keys = new ArrayList<>();
    private final int[] lastCodes;
    /** One key column: the key code of each of the column's codes, -1 where not met yet. */
    private int[] byColumnCode = new int[0];
    private int lastKey = -1;
    private List<String> lastTexts;

    Coder(KeyColumns spec) {
      columns = new ColumnCoder[spec.size()];
      ZoneId zone = ZoneId.of(spec.zone());
      for (int c = 0; c < columns.length; c++) {
        columns[c] = new ColumnCoder(spec.types().get(c), zone);
      }
      lastCodes = new int[columns.length];
    }

    public int count() {
      return keys.size();
    }

    public KeyValues key(int code) {
      return keys.get(code);
    }

    /** The key code of row r of a columnar batch, {@code vectors[c]} holding key column c. */
    public int code(ColumnVector[] vectors, int r) {
      if (columns.length == 1) {
        return single(columns[0].code(vectors[0], r));
      }
      boolean same = lastKey >= 0;
      int[] codes = lastCodes;
      for (int c = 0; c < columns.length; c++) {
        int v = columns[c].code(vectors[c], r);
        if (v != codes[c]) {
          same = false;
          codes[c] = v;
        }
      }
      if (same) {
        return lastKey;
      }
      // the lookup wraps the codes as they are; only a new key keeps a copy
      Integer known = byCodes.get(new CodeTuple(codes));
      if (known == null) {
        List<String> texts = new ArrayList<>(columns.length);
        for (int c = 0; c < columns.length; c++) {
          texts.add(columns[c].text(codes[c]));
        }
        known = intern(new KeyValues(texts));
        byCodes.put(new CodeTuple(codes.clone()), known);
      }
      lastKey = known;
      return known;
    }

    /**
     * The key code of a one-column key whose column code is {@code v}: an array lookup, since the column's codes are
     * 0, 1, 2, ... in the order its values appear in the task (no tuple, no hash per row).
     */
    private int single(int v) {
      if (v >= byColumnCode.length) {
        int old = byColumnCode.length;
        byColumnCode = Arrays.copyOf(byColumnCode, Math.max(v + 1, 2 * old));
        Arrays.fill(byColumnCode, old, byColumnCode.length, -1);
      }
      int known = byColumnCode[v];
      if (known < 0) {
        known = intern(new KeyValues(java.util.Collections.singletonList(columns[0].text(v))));
        byColumnCode[v] = known;
      }
      return known;
    }

    /** The key code of a row whose key columns, cast to string, are at positions {@code from ..}. */
    public int code(Row row, int from) {
      return code(c -> row.isNullAt(from + c) ? null : row.getString(from + c));
    }

    /** The key code of an internal row whose key columns, cast to string, are at positions {@code from ..}. */
    public int code(org.apache.spark.sql.catalyst.InternalRow row, int from) {
      return code(c -> row.isNullAt(from + c) ? null : row.getUTF8String(from + c).toString());
    }

    /** The key code of the texts {@code text.apply(c)} of the key columns c (null for a null value). */
    private int code(java.util.function.IntFunction<String> text) {
      List<String> texts = new ArrayList<>(columns.length);
      for (int c = 0; c < columns.length; c++) {
        String t = text.apply(c);
        // -0.0 and 0.0 are one key, as on the columnar path (and in Spark's grouping)
        texts.add("-0.0".equals(t) ? "0.0" : t);
      }
      if (lastKey >= 0 && texts.equals(lastTexts)) {
        return lastKey;
      }
      lastTexts = texts;
      lastKey = intern(new KeyValues(texts));
      return lastKey;
    }

    private int intern(KeyValues key) {
      Integer known = byText.get(key);
      if (known == null) {
        known = keys.size();
        keys.add(key);
        byText.put(key, known);
      }
      return known;
    }
  }

  private record CodeTuple(int[] codes) {
    @Override public boolean equals(Object o) {
      return o instanceof CodeTuple t && Arrays.equals(codes, t.codes);
    }

    @Override public int hashCode() {
      return Arrays.hashCode(codes);
    }
  }

  /**
   * Codes of long values (integers, dates, timestamps, booleans): an open-addressing table of primitives, so that a
   * row's lookup neither boxes its value nor allocates. Linear probing over a power-of-two table at most half full.
   */
  static final class LongCodes {
    private long[] keys = new long[16];
    private int[] codes = filled(16);
    private int size;

    private static int[] filled(int n) {
      int[] a = new int[n];
      Arrays.fill(a, -1);
      return a;
    }

    private static int slot(long x, int mask) {
      long h = x * 0x9E3779B97F4A7C15L;
      return (int) (h ^ (h >>> 32)) & mask;
    }

    /** The code of {@code x}, or -1 when it has none. */
    int get(long x) {
      int mask = keys.length - 1;
      for (int i = slot(x, mask); ; i = (i + 1) & mask) {
        if (codes[i] < 0) {
          return -1;
        }
        if (keys[i] == x) {
          return codes[i];
        }
      }
    }

    /** Gives {@code x} (not in the table) the code {@code code} (at least 0). */
    void put(long x, int code) {
      if (2 * (size + 1) > keys.length) {
        long[] oldKeys = keys;
        int[] oldCodes = codes;
        keys = new long[2 * oldKeys.length];
        codes = filled(keys.length);
        size = 0;
        for (int i = 0; i < oldKeys.length; i++) {
          if (oldCodes[i] >= 0) {
            put(oldKeys[i], oldCodes[i]);
          }
        }
      }
      int mask = keys.length - 1;
      int i = slot(x, mask);
      while (codes[i] >= 0) {
        i = (i + 1) & mask;
      }
      keys[i] = x;
      codes[i] = code;
      size++;
    }
  }

  /** Codes the values of one key column in a task: distinct values get 0, 1, ...; null gets its own code. */
  private static final class ColumnCoder {
    private static final int STRING = 0;
    private static final int LONGS = 1;
    private static final int OTHER = 2;
    private static final DateTimeFormatter SECONDS = DateTimeFormatter.ofPattern("yyyy-MM-dd HH:mm:ss");

    private final String type;
    private final ZoneId zone;
    private final int family;
    private final Map<UTF8String, Integer> strings = new HashMap<>();
    private final LongCodes longs = new LongCodes();
    private final Map<String, Integer> others = new HashMap<>();
    private final List<String> texts = new ArrayList<>();
    private int nullCode = -1;
    /** The string of each code (null for the null code), so that the previous row's string is not copied. */
    private final List<UTF8String> keptStrings = new ArrayList<>();
    private UTF8String lastString;
    private long lastLong;
    private int last = -1;

    ColumnCoder(String type, ZoneId zone) {
      this.type = type;
      this.zone = zone;
      this.family = type.equals("string") ? STRING
          : type.startsWith("decimal") || type.equals("double") || type.equals("float") ? OTHER : LONGS;
    }

    String text(int code) {
      return texts.get(code);
    }

    int code(ColumnVector v, int r) {
      if (v.isNullAt(r)) {
        if (nullCode < 0) {
          nullCode = add(null);
        }
        return nullCode;
      }
      switch (family) {
        case STRING: {
          UTF8String s = v.getUTF8String(r);
          if (lastString != null && s.equals(lastString)) {
            return last;
          }
          Integer c = strings.get(s);
          if (c == null) {
            UTF8String kept = s.clone();
            c = add(kept.toString());
            strings.put(kept, c);
            kept(c, kept);
          }
          lastString = keptStrings.get(c);
          last = c;
          return c;
        }
        case LONGS: {
          long x = rawLong(v, r);
          if (last >= 0 && x == lastLong) {
            return last;
          }
          int c = longs.get(x);
          if (c < 0) {
            c = add(longText(x));
            longs.put(x, c);
          }
          lastLong = x;
          last = c;
          return c;
        }
        default: {
          String t = otherText(v, r);
          Integer c = others.get(t);
          if (c == null) {
            c = add(t);
            others.put(t, c);
          }
          return c;
        }
      }
    }

    private void kept(int code, UTF8String s) {
      while (keptStrings.size() <= code) {
        keptStrings.add(null);
      }
      keptStrings.set(code, s);
    }

    private int add(String text) {
      texts.add(text);
      return texts.size() - 1;
    }

    private long rawLong(ColumnVector v, int r) {
      switch (type) {
        case "boolean":
          return v.getBoolean(r) ? 1 : 0;
        case "tinyint":
          return v.getByte(r);
        case "smallint":
          return v.getShort(r);
        case "int":
        case "date":
          return v.getInt(r);
        default:
          return v.getLong(r);
      }
    }

    private String longText(long x) {
      switch (type) {
        case "boolean":
          return x == 1 ? "true" : "false";
        case "date":
          return LocalDate.ofEpochDay(x).toString();
        case "timestamp":
          return timestampText(LocalDateTime.ofInstant(micros(x), zone), x);
        case "timestamp_ntz":
          return timestampText(LocalDateTime.ofInstant(micros(x), ZoneOffset.UTC), x);
        default:
          return Long.toString(x);
      }
    }

    private static Instant micros(long x) {
      return Instant.ofEpochSecond(Math.floorDiv(x, 1_000_000L), Math.floorMod(x, 1_000_000L) * 1000L);
    }

    /** Spark's text of a timestamp: seconds, then the fraction of a second without trailing zeros. */
    private static String timestampText(LocalDateTime t, long micros) {
      String base = SECONDS.format(t);
      long fraction = Math.floorMod(micros, 1_000_000L);
      if (fraction == 0) {
        return base;
      }
      String f = String.format("%06d", fraction);
      int end = f.length();
      while (f.charAt(end - 1) == '0') {
        end--;
      }
      return base + "." + f.substring(0, end);
    }

    private String otherText(ColumnVector v, int r) {
      if (type.equals("double")) {
        return Double.toString(normal(v.getDouble(r)));
      }
      if (type.equals("float")) {
        return Float.toString((float) normal(v.getFloat(r)));
      }
      DecimalType dt = (DecimalType) v.dataType();
      BigDecimal b = v.getDecimal(r, dt.precision(), dt.scale()).toJavaBigDecimal();
      return b.toPlainString();
    }

    /** -0.0 as 0.0: both are one group (Spark's grouping normalises them too). */
    private static double normal(double x) {
      return x == 0.0 ? 0.0 : x;
    }
  }
}
