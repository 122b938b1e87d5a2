package io.eigenmill.io;

import static io.eigenmill.io.SnapshotStoreTest.CONF;
import static io.eigenmill.io.SnapshotStoreTest.date;
import static io.eigenmill.io.SnapshotStoreTest.fresh;
import static io.eigenmill.io.SnapshotStoreTest.snapshot;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.SparkSuite;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * {@link SnapshotStore#select} on the shared local session: key order by typed values and predicates over the key
 * columns. The expected orders are written out by hand in the tests (numeric, chronological, nulls first); the
 * messages are checked for the setting, the predicate and the key columns.
 */
class SnapshotStoreSelectTest extends SparkSuite {
  static List<String> displays(List<SnapshotKey> keys) {
    return keys.stream().map(SnapshotKey::display).toList();
  }

  /** A store holding the given keys, committed in the order given (shuffled by the caller). */
  static SnapshotStore storeOf(String name, List<SnapshotKey> keys) {
    SnapshotStore store = fresh(name);
    List<Snapshot> snaps = new ArrayList<>();
    for (int i = 0; i < keys.size(); i++) {
      snaps.add(snapshot(keys.get(i), 2, 0, i));
    }
    store.commit(snaps.subList(0, snaps.size() / 2));
    store.commit(snaps.subList(snaps.size() / 2, snaps.size()));
    return store;
  }

  @Test
  void intKeysSortNumerically() {
    List<SnapshotKey> keys = new ArrayList<>();
    for (String v : new String[] {"10", "9", "100", "-3", null, "2"}) {
      keys.add(SnapshotKey.of("hour", "int", v));
    }
    SnapshotStore store = storeOf("ints", keys);
    assertEquals(List.of("hour=null", "hour=-3", "hour=2", "hour=9", "hour=10", "hour=100"),
        displays(store.select(spark, "")));
    assertEquals(List.of("hour=9", "hour=10", "hour=100"), displays(store.select(spark, "hour >= 9")));
    assertEquals(displays(store.select(spark, "")), displays(store.select(spark, null)));
  }

  @Test
  void dateKeysSortChronologicallyAndFilter() {
    List<SnapshotKey> keys = new ArrayList<>();
    for (String v : new String[] {"2026-11-03", "2026-10-31", "2026-11-01", "2026-11-02", "2025-12-31"}) {
      keys.add(date(v));
    }
    Collections.shuffle(keys, new java.util.Random(3));
    SnapshotStore store = storeOf("dates", keys);
    assertEquals(List.of("date=2025-12-31", "date=2026-10-31", "date=2026-11-01", "date=2026-11-02",
        "date=2026-11-03"), displays(store.select(spark, "")));
    assertEquals(List.of("date=2026-11-02", "date=2026-11-03"),
        displays(store.select(spark, "date >= '2026-11-02'")));
    assertEquals(List.of("date=2026-10-31", "date=2026-11-01"),
        displays(store.select(spark, "date between date'2026-10-01' and date'2026-11-01'")));
    // what select returns reads back
    assertEquals(2, store.readAll(store.select(spark, "date >= '2026-11-02'")).size());
  }

  @Test
  void twoKeyColumnsSortByBothTypedValues() {
    List<String> cols = List.of("date", "region");
    List<String> types = List.of("date", "string");
    List<SnapshotKey> keys = List.of(
        new SnapshotKey(cols, types, Arrays.asList("2026-11-02", "us")),
        new SnapshotKey(cols, types, Arrays.asList("2026-11-02", "eu")),
        new SnapshotKey(cols, types, Arrays.asList("2026-11-01", "us")),
        new SnapshotKey(cols, types, Arrays.asList("2026-11-02", null)));
    SnapshotStore store = storeOf("two", keys);
    assertEquals(List.of("date=2026-11-01, region=us", "date=2026-11-02, region=null",
        "date=2026-11-02, region=eu", "date=2026-11-02, region=us"), displays(store.select(spark, "")));
    assertEquals(List.of("date=2026-11-02, region=eu"),
        displays(store.select(spark, "region = 'eu' and date > '2026-11-01'")));
  }

  @Test
  void badPredicatesNameTheSettingThePredicateAndTheKeyColumns() {
    SnapshotStore store = storeOf("bad", List.of(date("2026-11-01"), date("2026-11-02")));
    InvalidJobException unknown = assertThrows(InvalidJobException.class,
        () -> store.select(spark, "region = 'eu'"));
    assertTrue(unknown.getMessage().startsWith("input.where = \"region = 'eu'\": column region is not a key"
        + " column"), unknown.getMessage());
    assertTrue(unknown.getMessage().contains("date date"), unknown.getMessage());
    InvalidJobException parse = assertThrows(InvalidJobException.class, () -> store.select(spark, "date >= ("));
    assertTrue(parse.getMessage().startsWith("input.where = \"date >= (\": not a Spark SQL expression"),
        parse.getMessage());
    assertTrue(parse.getMessage().contains("key columns of the store"), parse.getMessage());
    InvalidJobException none = assertThrows(InvalidJobException.class,
        () -> store.select(spark, "date > '2027-01-01'"));
    assertTrue(none.getMessage().startsWith("input.where = \"date > '2027-01-01'\": selects none of the 2"),
        none.getMessage());
    assertTrue(none.getMessage().contains("(keys from date=2026-11-01 to date=2026-11-02)"),
        none.getMessage());
    assertTrue(none.getMessage().contains("output.snapshots = " + store.path().replace("file:", "")),
        none.getMessage());
    InvalidJobException notBoolean = assertThrows(InvalidJobException.class, () -> store.select(spark, "date"));
    assertTrue(notBoolean.getMessage().contains("boolean predicate"), notBoolean.getMessage());
  }

  @Test
  void keysOverDifferentColumnsAreRefused() {
    SnapshotStore store = fresh("mixed");
    store.commit(List.of(snapshot(date("2026-11-01"), 2, 0, 1)));
    store.commit(List.of(snapshot(SnapshotKey.of("day", "string", "2026-11-02"), 2, 0, 2)));
    InvalidJobException e = assertThrows(InvalidJobException.class, () -> store.select(spark, ""));
    assertTrue(e.getMessage().contains("date=2026-11-01") && e.getMessage().contains("day=2026-11-02"),
        e.getMessage());
    assertTrue(e.getMessage().startsWith("output.snapshots = "), e.getMessage());
    SnapshotStore empty = fresh("empty");
    InvalidJobException none = assertThrows(InvalidJobException.class, () -> empty.select(spark, ""));
    assertTrue(none.getMessage().contains("holds no committed snapshots"), none.getMessage());
    // reopened for reading, the same store speaks of the reading setting
    SnapshotStore reading = SnapshotStore.open(CONF, "input.snapshots", store.path(), false);
    assertTrue(assertThrows(InvalidJobException.class, () -> reading.select(spark, "")).getMessage()
        .startsWith("input.snapshots = "));
  }
}
