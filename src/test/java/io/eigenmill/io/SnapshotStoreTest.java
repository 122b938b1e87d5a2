package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.JobFiles;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashSet;
import java.util.List;
import java.util.SplittableRandom;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.stream.Stream;
import org.apache.hadoop.conf.Configuration;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * The snapshot store without Spark: file format round trips, the commit protocol (idempotence, killed and failed
 * runs, concurrent runs) and the messages for bad stores and bad files. The check values are the snapshots the test
 * builds itself (seeded random doubles plus chosen special values: -0.0, subnormals, 1e300, NaN payloads,
 * infinities); a round trip must give them back bit for bit, so every comparison is exact (raw long bits, no
 * tolerance). File counts on disk are made with java.nio, outside Hadoop.
 */
class SnapshotStoreTest {
  static final Configuration CONF = new Configuration();
  static final double[] SPECIAL = {-0.0, 0.0, Double.MIN_VALUE, -Double.MIN_VALUE, Double.MIN_NORMAL / 3, 1e300,
      -1e300, Double.MAX_VALUE, Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY,
      Double.longBitsToDouble(0x7ff8dead_beef0001L), 1.0 / 3};

  static SnapshotStore fresh(String name) {
    Path dir = JobFiles.scratch("snapstore").resolve(name);
    return SnapshotStore.open(CONF, "output.snapshots", dir.toString(), true);
  }

  static SnapshotKey date(String value) {
    return SnapshotKey.of("date", "date", value);
  }

  static List<String> features(int d) {
    List<String> f = new ArrayList<>();
    for (int i = 0; i < d; i++) {
      f.add("f" + i);
    }
    return f;
  }

  /** A snapshot of d features and g groups (0: one entry, no groups) filled from {@code seed} and SPECIAL. */
  static Snapshot snapshot(SnapshotKey key, int d, int groups, long seed) {
    return snapshot(key, features(d), groups, seed);
  }

  static Snapshot snapshot(SnapshotKey key, List<String> features, int groups, long seed) {
    int d = features.size();
    SplittableRandom r = new SplittableRandom(seed);
    List<String> types = features.stream().map(f -> "double").toList();
    List<SnapshotEntry> entries = new ArrayList<>();
    int[] next = {(int) (seed % SPECIAL.length)};
    for (int g = 0; g < Math.max(1, groups); g++) {
      List<String> group = groups == 0 ? null : Arrays.asList(g == 1 ? null : "host/" + g, "é=" + g);
      long[] missing = r.longs(d, 0, 1000).toArray();
      double[][] arrays = {new double[d], new double[d], new double[SnapshotEntry.packedLength(d)]};
      for (double[] a : arrays) {
        for (int i = 0; i < a.length; i++) {
          a[i] = r.nextInt(4) == 0 ? SPECIAL[next[0]++ % SPECIAL.length] : (r.nextDouble() - 0.5) * 1e6;
        }
      }
      entries.add(new SnapshotEntry(group, 1000 + g, 990 + g, missing, 990 + g, arrays[0], arrays[1], arrays[2]));
    }
    List<String> groupColumns = groups == 0 ? List.of() : List.of("host", "zone");
    List<String> groupTypes = groups == 0 ? List.of() : List.of("string", "string");
    return new Snapshot(key, 1, "0.1.0-test", features, types, PcaModel.fingerprint(features, types), groupColumns,
        groupTypes, "/data/in/" + key.display(), entries);
  }

  static void assertSameBits(Snapshot expected, Snapshot actual) {
    assertEquals(expected.key(), actual.key());
    assertEquals(expected.features(), actual.features());
    assertEquals(expected.featureTypes(), actual.featureTypes());
    assertEquals(expected.fingerprint(), actual.fingerprint());
    assertEquals(expected.groupColumns(), actual.groupColumns());
    assertEquals(expected.groupTypes(), actual.groupTypes());
    assertEquals(expected.source(), actual.source());
    assertEquals(expected.productVersion(), actual.productVersion());
    assertEquals(expected.entries().size(), actual.entries().size());
    for (int e = 0; e < expected.entries().size(); e++) {
      SnapshotEntry x = expected.entries().get(e);
      SnapshotEntry y = actual.entries().get(e);
      assertEquals(x.group(), y.group());
      assertEquals(x.rowsRead(), y.rowsRead());
      assertEquals(x.rowsUsed(), y.rowsUsed());
      assertEquals(x.n(), y.n());
      assertTrue(Arrays.equals(x.missingCells(), y.missingCells()));
      assertArrayEquals(bits(x.shift()), bits(y.shift()));
      assertArrayEquals(bits(x.mean()), bits(y.mean()));
      assertArrayEquals(bits(x.packedM2()), bits(y.packedM2()));
    }
    assertEquals(expected, actual); // the records' own equality is bit for bit as well
  }

  static void assertArrayEquals(long[] a, long[] b) {
    org.junit.jupiter.api.Assertions.assertArrayEquals(a, b);
  }

  static long[] bits(double[] a) {
    return Arrays.stream(a).mapToLong(Double::doubleToRawLongBits).toArray();
  }

  static List<Path> files(SnapshotStore store, String under) throws IOException {
    Path dir = Path.of(java.net.URI.create(store.path())).resolve(under);
    if (!Files.exists(dir)) {
      return List.of();
    }
    try (Stream<Path> s = Files.walk(dir)) {
      return s.filter(Files::isRegularFile).sorted().toList();
    }
  }

  @ParameterizedTest
  @CsvSource({"1, 0", "3, 0", "50, 0", "1, 3", "3, 3", "50, 3"})
  void roundTripIsBitExact(int d, int groups) {
    SnapshotStore store = fresh("rt");
    Snapshot s = snapshot(date("2026-11-01"), d, groups, 17L * d + groups);
    store.commit(List.of(s));
    assertEquals(List.of(s.key()), store.keys());
    Snapshot back = store.read(s.key());
    assertSameBits(s, back);
    // a store opened again (a reading run) sees the same
    Snapshot again = SnapshotStore.open(CONF, "input.snapshots", store.path(), false).read(s.key());
    assertSameBits(s, again);
  }

  @Test
  void specialValuesSurviveExactly() {
    SnapshotStore store = fresh("special");
    int d = 4; // 2d + d(d+1)/2 = 18 doubles: every SPECIAL value at a known place
    double[] all = new double[18];
    for (int i = 0; i < all.length; i++) {
      all[i] = SPECIAL[i % SPECIAL.length];
    }
    SnapshotEntry e = new SnapshotEntry(null, 5, 4, new long[] {0, 1, 0, Long.MAX_VALUE}, 4,
        Arrays.copyOfRange(all, 0, 4), Arrays.copyOfRange(all, 4, 8), Arrays.copyOfRange(all, 8, 18));
    List<String> f = features(d);
    List<String> t = List.of("double", "float", "int", "bigint");
    Snapshot s = new Snapshot(date("2026-11-01"), 1, "v", f, t, PcaModel.fingerprint(f, t), List.of(), List.of(),
        "in", List.of(e));
    store.commit(List.of(s));
    SnapshotEntry back = store.read(s.key()).entries().get(0);
    assertEquals(0x8000000000000000L, Double.doubleToRawLongBits(back.shift()[0])); // -0.0 kept, not 0.0
    assertEquals(1L, Double.doubleToRawLongBits(back.shift()[2])); // the smallest subnormal
    assertEquals(0x7ff8dead_beef0001L, Double.doubleToRawLongBits(back.packedM2()[2])); // the NaN's payload
    assertEquals(1e300, back.mean()[1]);
    assertSameBits(s, store.read(s.key()));
  }

  @Test
  void oddKeyValuesAndNullsRoundTrip() throws IOException {
    SnapshotStore store = fresh("odd");
    List<String> columns = List.of("region", "day part");
    List<String> types = List.of("string", "string");
    List<SnapshotKey> keys = List.of(
        new SnapshotKey(columns, types, Arrays.asList("eu/west", "a=b,c d")),
        new SnapshotKey(columns, types, Arrays.asList(null, "x")),
        new SnapshotKey(columns, types, Arrays.asList("null", "x")), // the text "null" is not a null value
        new SnapshotKey(columns, types, Arrays.asList("Zürich ☃ 東京", "!null")),
        new SnapshotKey(columns, types, Arrays.asList("..", "%41 + 100%")),
        new SnapshotKey(columns, types, Arrays.asList("", "a:b*?[c]{d}")));
    List<Snapshot> snaps = new ArrayList<>();
    for (int i = 0; i < keys.size(); i++) {
      snaps.add(snapshot(keys.get(i), 3, i % 2 == 0 ? 0 : 3, i));
    }
    store.commit(snaps);
    assertEquals(new HashSet<>(keys), new HashSet<>(store.keys()));
    assertEquals(keys.size(), store.keys().size());
    for (Snapshot s : snaps) {
      assertSameBits(s, store.read(s.key()));
    }
    assertEquals(keys.size(), files(store, "keys").size()); // one folder and one version each: no collisions
    assertEquals("region=null, day part=x", keys.get(1).display());
    assertEquals("region=%21null,day+part=x", SnapshotStore.folderName(
        new SnapshotKey(columns, types, Arrays.asList("!null", "x"))));
    assertEquals("region=!null,day+part=x", SnapshotStore.folderName(keys.get(1)));
  }

  @Test
  void committingTheSameSnapshotTwiceIsIdempotent() throws IOException {
    SnapshotStore store = fresh("idem");
    Snapshot a = snapshot(date("2026-11-01"), 3, 0, 1);
    Snapshot b = snapshot(date("2026-11-02"), 3, 3, 2);
    store.commit(List.of(a, b));
    List<SnapshotKey> keys = store.keys();
    store.commit(List.of(b));
    assertEquals(new HashSet<>(keys), new HashSet<>(store.keys()));
    assertEquals(2, store.keys().size());
    assertSameBits(b, store.read(b.key()));
    assertSameBits(a, store.read(a.key()));
    Path bFolder = Path.of(java.net.URI.create(store.path())).resolve("keys")
        .resolve(SnapshotStore.folderName(b.key()));
    try (Stream<Path> s = Files.list(bFolder)) {
      assertEquals(1, s.count(), "version files of " + b.key().display());
    }
    // the first commit still wins a, so its commit file stays; the second commit's file holds b
    assertEquals(2, files(store, "commits").size());
  }

  @Test
  void aReplacedKeyReadsTheNewSnapshotAndTheOldCommitGoes() throws IOException {
    SnapshotStore store = fresh("replace");
    Snapshot old = snapshot(date("2026-11-01"), 3, 0, 1);
    Snapshot other = snapshot(date("2026-11-02"), 3, 0, 2);
    store.commit(List.of(old));
    store.commit(List.of(other));
    Snapshot newer = snapshot(date("2026-11-01"), 3, 0, 99);
    assertNotEquals(old, newer);
    store.commit(List.of(newer));
    assertSameBits(newer, store.read(newer.key()));
    assertSameBits(other, store.read(other.key()));
    assertEquals(2, files(store, "keys").size());
    assertEquals(2, files(store, "commits").size()); // the first commit won nothing any more and was deleted
  }

  @Test
  void aReadRacingACommitOnItsKeyReadsTheNewVersion() {
    SnapshotStore store = fresh("race");
    Snapshot old = snapshot(date("2026-11-01"), 3, 0, 1);
    Snapshot other = snapshot(date("2026-11-02"), 3, 0, 2);
    store.commit(List.of(old, other));
    Snapshot newer = snapshot(date("2026-11-01"), 3, 0, 3);
    SnapshotStore writer = SnapshotStore.open(CONF, "output.snapshots", store.path(), true);
    // between the reader's listing of the commits and its read, another run replaces the key and deletes the
    // version the reader's listing names
    store.hook = (at, key) -> {
      if (at.equals("read") && key.equals(old.key())) {
        store.hook = (a, k) -> { };
        writer.commit(List.of(newer));
      }
    };
    List<Snapshot> read = store.readAll(List.of(other.key(), old.key()));
    assertSameBits(other, read.get(0));
    assertSameBits(newer, read.get(1));
  }

  @Test
  void aKilledRunIsIgnored() throws IOException {
    SnapshotStore store = fresh("killed");
    Snapshot a = snapshot(date("2026-11-01"), 3, 0, 1);
    store.commit(List.of(a));
    // a run killed after writing its version file and before its commit file: a newer commit id, no commit file
    String later = SnapshotStore.newCommitId();
    Snapshot stray = snapshot(date("2026-11-01"), 3, 0, 2);
    store.writeSnapshot(store.versionPath(a.key(), later), stray);
    Snapshot strayNew = snapshot(date("2026-11-09"), 3, 0, 3);
    store.writeSnapshot(store.versionPath(strayNew.key(), later), strayNew);
    assertEquals(List.of(a.key()), store.keys());
    assertSameBits(a, store.read(a.key()));
    InvalidJobException e = assertThrows(InvalidJobException.class, () -> store.read(strayNew.key()));
    assertTrue(e.getMessage().contains("date=2026-11-09"), e.getMessage());
    // a later commit leaves the young orphans alone (their run may still be writing)
    store.commit(List.of(snapshot(date("2026-11-02"), 3, 0, 4)));
    assertEquals(4, files(store, "keys").size());
    assertSameBits(a, store.read(a.key()));
  }

  @Test
  void oldOrphansAreDeletedByALaterCommit() throws IOException {
    SnapshotStore store = fresh("orphans");
    Snapshot a = snapshot(date("2026-11-01"), 3, 0, 1);
    store.commit(List.of(a));
    long twoHoursAgo = System.currentTimeMillis() - 2 * SnapshotStore.ORPHAN_AGE_MILLIS;
    String old = String.format("%015d-%s", twoHoursAgo, java.util.UUID.randomUUID());
    store.writeSnapshot(store.versionPath(a.key(), old), snapshot(a.key(), 3, 0, 5));
    Path commits = Path.of(java.net.URI.create(store.path())).resolve("commits");
    Files.writeString(commits.resolve(".tmp-" + old + ".json"), "{\"keys\": [");
    assertEquals(2, files(store, "keys").size());
    store.commit(List.of(snapshot(date("2026-11-02"), 3, 0, 2)));
    assertEquals(2, files(store, "keys").size()); // the orphan went, 11-02 came
    assertFalse(Files.exists(commits.resolve(".tmp-" + old + ".json")));
    assertSameBits(a, store.read(a.key()));
  }

  @Test
  void aFailedCommitChangesNothing() throws IOException {
    SnapshotStore store = fresh("failed");
    Snapshot a = snapshot(date("2026-11-01"), 3, 0, 1);
    store.commit(List.of(a));
    List<Path> before = files(store, "");
    for (String step : List.of("version", "commit", "rename")) {
      Snapshot a2 = snapshot(date("2026-11-01"), 3, 0, 2);
      Snapshot c = snapshot(date("2026-11-03"), 3, 0, 3);
      Snapshot d = snapshot(date("2026-11-04"), 3, 0, 4);
      store.hook = (at, key) -> {
        if (at.equals(step) && (key == null || key.equals(d.key()))) {
          throw new IOException("injected failure at " + at);
        }
      };
      RuntimeException e = assertThrows(RuntimeException.class, () -> store.commit(List.of(a2, c, d)));
      assertTrue(String.valueOf(e.getCause()).contains("injected failure at " + step), String.valueOf(e));
      assertEquals(List.of(a.key()), store.keys(), step);
      assertSameBits(a, store.read(a.key()));
      assertEquals(before, files(store, ""), "files after a failure at " + step);
    }
    store.hook = (at, key) -> { };
    Snapshot c = snapshot(date("2026-11-03"), 3, 0, 3);
    store.commit(List.of(c));
    assertEquals(2, store.keys().size());
  }

  @Test
  void concurrentCommitsOnDifferentKeysAllLand() throws Exception {
    SnapshotStore store = fresh("concurrent");
    int threads = 4;
    int rounds = 5;
    int perRound = 3;
    ExecutorService pool = Executors.newFixedThreadPool(threads);
    List<Snapshot> expected = new ArrayList<>();
    List<Future<?>> done = new ArrayList<>();
    for (int t = 0; t < threads; t++) {
      List<List<Snapshot>> runs = new ArrayList<>();
      for (int r = 0; r < rounds; r++) {
        List<Snapshot> run = new ArrayList<>();
        for (int k = 0; k < perRound; k++) {
          SnapshotKey key = new SnapshotKey(List.of("thread", "n"), List.of("int", "int"),
              List.of(String.valueOf(t), String.valueOf(r * perRound + k)));
          run.add(snapshot(key, 5, t % 2 == 0 ? 0 : 3, 1000L * t + 10L * r + k));
        }
        runs.add(run);
        expected.addAll(run);
      }
      // each thread opens its own store object, as separate runs would
      SnapshotStore mine = SnapshotStore.open(CONF, "output.snapshots", store.path(), true);
      done.add(pool.submit(() -> {
        for (List<Snapshot> run : runs) {
          mine.commit(run);
        }
        return null;
      }));
    }
    for (Future<?> f : done) {
      f.get();
    }
    pool.shutdown();
    assertEquals(threads * rounds * perRound, store.keys().size());
    for (Snapshot s : expected) {
      assertSameBits(s, store.read(s.key()));
    }
    assertEquals(expected.size(), files(store, "keys").size());
  }

  @Test
  void concurrentCommitsOnTheSameKeyLeaveTheLaterCommitId() throws Exception {
    SnapshotStore store = fresh("samekey");
    ExecutorService pool = Executors.newFixedThreadPool(4);
    List<Future<?>> done = new ArrayList<>();
    for (int t = 0; t < 4; t++) {
      int seed = t;
      done.add(pool.submit(() -> {
        for (int r = 0; r < 5; r++) {
          store.commit(List.of(snapshot(date("2026-11-01"), 2, 0, 100L * seed + r)));
        }
        return null;
      }));
    }
    for (Future<?> f : done) {
      f.get();
    }
    pool.shutdown();
    assertEquals(List.of(date("2026-11-01")), store.keys());
    Snapshot s = store.read(date("2026-11-01")); // readable: one of the 20 committed versions
    assertEquals(2, s.d());
    // whichever won, the file the index names holds the greatest commit id among those left
    List<Path> commits = files(store, "commits");
    assertEquals(1, commits.size(), "commit files " + commits);
    List<Path> versions = files(store, "keys");
    assertEquals(1, versions.size(), "version files " + versions);
    assertEquals(commits.get(0).getFileName().toString().replace(".json", ".snap"),
        versions.get(0).getFileName().toString());
  }

  // ------------------------------------------------------------------------------------------------ bad input

  @Test
  void aNonEmptyFolderWithoutMarkerIsRefused() throws IOException {
    Path dir = JobFiles.scratch("notastore");
    Files.writeString(dir.resolve("part-0000.parquet"), "x");
    InvalidJobException e = assertThrows(InvalidJobException.class,
        () -> SnapshotStore.open(CONF, "output.snapshots", dir.toString(), true));
    assertTrue(e.getMessage().startsWith("output.snapshots = " + dir + ": is not a snapshot store: "),
        e.getMessage());
    assertTrue(e.getMessage().contains("not empty"), e.getMessage());
    InvalidJobException file = assertThrows(InvalidJobException.class, () -> SnapshotStore.open(CONF,
        "output.snapshots", dir.resolve("part-0000.parquet").toString(), true));
    assertTrue(file.getMessage().contains("is not a snapshot store: it is a file"), file.getMessage());
    assertTrue(file.getMessage().contains("output.snapshots = "), file.getMessage());
  }

  @Test
  void aMissingStoreIsRefusedToAReadingRun() {
    Path dir = JobFiles.scratch("missing").resolve("nothing-here");
    InvalidJobException e = assertThrows(InvalidJobException.class,
        () -> SnapshotStore.open(CONF, "input.snapshots", dir.toString(), false));
    assertTrue(e.getMessage().startsWith("input.snapshots = " + dir + ": "), e.getMessage());
    assertTrue(e.getMessage().contains("does not exist"), e.getMessage());
    assertFalse(Files.exists(dir)); // nothing created
    Path empty = JobFiles.scratch("emptystore");
    InvalidJobException e2 = assertThrows(InvalidJobException.class,
        () -> SnapshotStore.open(CONF, "input.snapshots", empty.toString(), false));
    assertTrue(e2.getMessage().contains("is not a snapshot store"), e2.getMessage());
  }

  @Test
  void anEmptyFolderBecomesAStoreAndOpensAgain() throws IOException {
    Path dir = JobFiles.scratch("emptyfolder");
    SnapshotStore s = SnapshotStore.open(CONF, "output.snapshots", dir.toString(), true);
    assertTrue(Files.exists(dir.resolve(SnapshotStore.MARKER)));
    String marker = Files.readString(dir.resolve(SnapshotStore.MARKER));
    assertTrue(marker.contains("\"kind\" : \"eigenmill-snapshot-store\""), marker);
    assertTrue(marker.contains("\"format_version\" : 1"), marker);
    assertTrue(s.keys().isEmpty());
    SnapshotStore.open(CONF, "input.snapshots", dir.toString(), false);
    try (Stream<Path> all = Files.list(dir)) {
      assertEquals(List.of(SnapshotStore.MARKER), all.map(p -> p.getFileName().toString()).toList());
    }
  }

  @Test
  void aCorruptedFileIsACrcError() throws IOException {
    SnapshotStore store = fresh("corrupt");
    Snapshot a = snapshot(date("2026-11-01"), 6, 3, 1);
    store.commit(List.of(a));
    Path file = files(store, "keys").get(0);
    byte[] bytes = Files.readAllBytes(file);
    for (int at : new int[] {bytes.length / 2, bytes.length - 20, 40}) { // a double, the last double, the header
      byte[] flipped = bytes.clone();
      flipped[at] ^= 0x10;
      Files.write(file, flipped);
      InvalidJobException e = assertThrows(InvalidJobException.class, () -> store.read(a.key()));
      assertTrue(e.getMessage().startsWith("input.snapshots = "), e.getMessage());
      assertTrue(e.getMessage().contains(file.getFileName().toString()), e.getMessage());
      assertTrue(e.getMessage().contains("checksum mismatch"), "byte " + at + ": " + e.getMessage());
    }
    Files.write(file, Arrays.copyOf(bytes, bytes.length - 3));
    InvalidJobException cut = assertThrows(InvalidJobException.class, () -> store.read(a.key()));
    assertTrue(cut.getMessage().contains("input.snapshots = ") && cut.getMessage().contains("truncated")
        || cut.getMessage().contains("checksum"), cut.getMessage());
    Files.write(file, Arrays.copyOf(bytes, 10));
    InvalidJobException tiny = assertThrows(InvalidJobException.class, () -> store.read(a.key()));
    assertTrue(tiny.getMessage().contains("truncated"), tiny.getMessage());
    byte[] magic = bytes.clone();
    magic[3] = 'X';
    Files.write(file, magic);
    InvalidJobException m = assertThrows(InvalidJobException.class, () -> store.read(a.key()));
    assertTrue(m.getMessage().contains("magic EMSNAP01"), m.getMessage());
    Files.write(file, bytes);
    assertSameBits(a, store.read(a.key()));
  }

  @Test
  void aNewerFormatVersionIsRefused() throws IOException {
    SnapshotStore store = fresh("newer");
    Snapshot a = snapshot(date("2026-11-01"), 2, 0, 1);
    store.commit(List.of(a));
    Path file = files(store, "keys").get(0);
    // rewrite the file as a future version would: format_version 2, a valid CRC
    Snapshot v2 = new Snapshot(a.key(), 2, "9.0", a.features(), a.featureTypes(), a.fingerprint(),
        a.groupColumns(), a.groupTypes(), a.source(), a.entries());
    Files.delete(file);
    store.writeSnapshot(new org.apache.hadoop.fs.Path(file.toUri()), v2);
    InvalidJobException e = assertThrows(InvalidJobException.class, () -> store.read(a.key()));
    assertTrue(e.getMessage().contains("format version 2"), e.getMessage());
    assertTrue(e.getMessage().contains("reads snapshot format version 1 only"), e.getMessage());
    assertThrows(IllegalArgumentException.class, () -> store.commit(List.of(v2)));
  }

  @Test
  void differingFeatureListsCannotBeMerged() {
    SnapshotStore store = fresh("differ");
    List<String> twelve = List.of("cpu_idle", "cpu_iowait", "cpu_user", "cpu_sys", "mem", "swap", "net_in",
        "net_out", "disk_r", "disk_w", "load1", "load5");
    List<String> eleven = new ArrayList<>(twelve);
    eleven.remove("cpu_user");
    Snapshot a = snapshot(date("2026-11-01"), twelve, 0, 1);
    Snapshot b = snapshot(date("2026-11-02"), twelve, 0, 2);
    Snapshot c = snapshot(date("2026-11-03"), eleven, 0, 3);
    store.commit(List.of(a, b, c));
    assertEquals(2, store.readAll(List.of(a.key(), b.key())).size());
    InvalidJobException e = assertThrows(InvalidJobException.class,
        () -> store.readAll(List.of(a.key(), b.key(), c.key())));
    assertTrue(e.getMessage().startsWith("input.snapshots"), e.getMessage());
    assertTrue(e.getMessage().contains("date=2026-11-01") && e.getMessage().contains("date=2026-11-03"),
        e.getMessage());
    assertTrue(e.getMessage().contains("feature lists differ: date=2026-11-01 has 12 features, date=2026-11-03"
        + " has 11; first difference at position 3: cpu_user vs cpu_sys"), e.getMessage());
    // same names, another type
    List<String> types = new ArrayList<>(a.featureTypes());
    types.set(4, "float");
    Snapshot d = new Snapshot(date("2026-11-04"), 1, "v", twelve, types, PcaModel.fingerprint(twelve, types),
        List.of(), List.of(), "in", a.entries());
    store.commit(List.of(d));
    InvalidJobException t = assertThrows(InvalidJobException.class, () -> store.readAll(List.of(a.key(), d.key())));
    assertTrue(t.getMessage().contains("feature types differ: mem is double in date=2026-11-01 and float in"
        + " date=2026-11-04"), t.getMessage());
    // groups against none
    Snapshot g = snapshot(date("2026-11-05"), twelve, 3, 5);
    store.commit(List.of(g));
    InvalidJobException gr = assertThrows(InvalidJobException.class, () -> store.readAll(List.of(a.key(), g.key())));
    assertTrue(gr.getMessage().contains("group column lists differ"), gr.getMessage());
  }

  @Test
  void aMalformedSnapshotIsRefusedBeforeAnythingIsWritten() throws IOException {
    SnapshotStore store = fresh("malformed");
    Snapshot a = snapshot(date("2026-11-01"), 3, 0, 1);
    store.commit(List.of(a));
    List<Path> before = files(store, "");
    SnapshotEntry e = a.entries().get(0);
    SnapshotEntry shortM2 = new SnapshotEntry(null, 1, 1, e.missingCells(), 1, e.shift(), e.mean(),
        Arrays.copyOf(e.packedM2(), 5));
    Snapshot bad = new Snapshot(date("2026-11-02"), 1, "v", a.features(), a.featureTypes(), a.fingerprint(),
        List.of(), List.of(), "in", List.of(shortM2));
    IllegalArgumentException x = assertThrows(IllegalArgumentException.class,
        () -> store.commit(List.of(snapshot(date("2026-11-03"), 3, 0, 3), bad)));
    assertTrue(x.getMessage().contains("packedM2 5"), x.getMessage());
    Snapshot wrongPrint = new Snapshot(date("2026-11-02"), 1, "v", a.features(), a.featureTypes(), "0123",
        List.of(), List.of(), "in", a.entries());
    assertThrows(IllegalArgumentException.class, () -> store.commit(List.of(wrongPrint)));
    assertThrows(IllegalArgumentException.class, () -> store.commit(List.of(a, a)));
    assertEquals(before, files(store, ""));
    assertEquals(List.of(a.key()), store.keys());
  }

  @Test
  void readingAnAbsentKeyNamesIt() {
    SnapshotStore store = fresh("absent");
    store.commit(List.of(snapshot(date("2026-11-01"), 2, 0, 1)));
    InvalidJobException e = assertThrows(InvalidJobException.class, () -> store.read(date("2026-12-24")));
    assertTrue(e.getMessage().contains("input.snapshots") && e.getMessage().contains("date=2026-12-24"),
        e.getMessage());
  }

  @Test
  void bytesPerSnapshotCoversTheFileOnDisk() throws IOException {
    // the doubles are exact, the header an estimate: the file must not be larger than the estimate, nor much smaller
    for (int[] dg : new int[][] {{1, 0}, {3, 3}, {50, 0}, {50, 3}}) {
      SnapshotStore store = fresh("size");
      store.commit(List.of(snapshot(date("2026-11-01"), dg[0], dg[1], 1)));
      long actual = Files.size(files(store, "keys").get(0));
      long estimate = SnapshotStore.bytesPerSnapshot(dg[0], dg[1]);
      assertTrue(actual <= estimate && estimate < actual + 2000 + 0.5 * actual,
          "d " + dg[0] + " groups " + dg[1] + ": " + actual + " bytes, estimated " + estimate);
    }
  }
}
