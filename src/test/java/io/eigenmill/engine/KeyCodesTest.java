package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.apache.spark.sql.execution.vectorized.OnHeapColumnVector;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.junit.jupiter.api.Test;

/**
 * The per-task key codes of a keyed pass: the primitive table of long values and the coder's one-column and
 * several-column paths. Reference: java.util.HashMap / LinkedHashMap over the same values (the JDK's own maps, an
 * implementation independent of the coder's), and the first-appearance order the coder documents.
 */
class KeyCodesTest {

  @Test
  void longCodesAgreeWithAHashMapOverSpreadAndCollidingValues() {
    Random random = new Random(20261204);
    KeyColumns.LongCodes codes = new KeyColumns.LongCodes();
    Map<Long, Integer> reference = new HashMap<>();
    List<Long> values = new ArrayList<>(List.of(0L, -1L, 1L, Long.MIN_VALUE, Long.MAX_VALUE));
    for (int i = 0; i < 5000; i++) {
      values.add(random.nextLong());
      values.add((long) random.nextInt(3000));
      // multiples of a power of two: values whose low bits agree, the usual worst case of a hash table
      values.add((long) random.nextInt(2000) << 20);
    }
    for (long x : values) {
      int got = codes.get(x);
      Integer want = reference.get(x);
      assertEquals(want == null ? -1 : want, got, "code of " + x);
      if (want == null) {
        codes.put(x, reference.size());
        reference.put(x, reference.size());
      }
    }
    for (Map.Entry<Long, Integer> e : reference.entrySet()) {
      assertEquals(e.getValue(), codes.get(e.getKey()), "code of " + e.getKey() + " after every growth");
    }
  }

  @Test
  void oneColumnCoderGivesCodesInFirstAppearanceOrderWithNullAsItsOwnKey() {
    int rows = 4000;
    Random random = new Random(7);
    OnHeapColumnVector v = new OnHeapColumnVector(rows, DataTypes.IntegerType);
    Integer[] values = new Integer[rows];
    for (int r = 0; r < rows; r++) {
      values[r] = random.nextInt(50) == 0 ? null : random.nextInt(1000) - 500;
      if (values[r] == null) {
        v.putNull(r);
      } else {
        v.putInt(r, values[r]);
      }
    }
    KeyColumns.Coder coder = new KeyColumns(List.of("g"), List.of("int"), "UTC").coder();
    Map<String, Integer> firstSeen = new LinkedHashMap<>();
    for (int r = 0; r < rows; r++) {
      String text = values[r] == null ? null : Integer.toString(values[r]);
      firstSeen.putIfAbsent(text, firstSeen.size());
      int code = coder.code(new ColumnVector[] {v}, r);
      assertEquals(firstSeen.get(text), code, "row " + r);
      assertEquals(Arrays.asList(text), coder.key(code).texts(), "row " + r);
    }
    assertEquals(firstSeen.size(), coder.count());
    v.close();
  }

  @Test
  void twoColumnCoderKeysEqualPairsOfTexts() {
    int rows = 3000;
    Random random = new Random(11);
    OnHeapColumnVector a = new OnHeapColumnVector(rows, DataTypes.LongType);
    OnHeapColumnVector b = new OnHeapColumnVector(rows, DataTypes.StringType);
    long[] as = new long[rows];
    String[] bs = new String[rows];
    for (int r = 0; r < rows; r++) {
      as[r] = random.nextInt(7) * 1_000_000_007L;
      bs[r] = "edge-" + random.nextInt(5);
      a.putLong(r, as[r]);
      b.putByteArray(r, bs[r].getBytes(java.nio.charset.StandardCharsets.UTF_8));
    }
    KeyColumns.Coder coder = new KeyColumns(List.of("a", "b"), List.of("bigint", "string"), "UTC").coder();
    Map<List<String>, Integer> firstSeen = new LinkedHashMap<>();
    for (int r = 0; r < rows; r++) {
      List<String> texts = List.of(Long.toString(as[r]), bs[r]);
      firstSeen.putIfAbsent(texts, firstSeen.size());
      int code = coder.code(new ColumnVector[] {a, b}, r);
      assertEquals(firstSeen.get(texts), code, "row " + r);
      assertEquals(texts, coder.key(code).texts(), "row " + r);
    }
    assertEquals(firstSeen.size(), coder.count());
    a.close();
    b.close();
  }
}
