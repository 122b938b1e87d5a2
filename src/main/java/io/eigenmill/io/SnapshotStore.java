package io.eigenmill.io;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import io.eigenmill.Version;
import io.eigenmill.settings.InvalidJobException;
import java.io.BufferedInputStream;
import java.io.BufferedOutputStream;
import java.io.DataInputStream;
import java.io.DataOutputStream;
import java.io.EOFException;
import java.io.FileNotFoundException;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.io.UncheckedIOException;
import java.net.URLEncoder;
import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.UUID;
import java.util.concurrent.atomic.AtomicLong;
import java.util.regex.Pattern;
import java.util.zip.CRC32;
import java.util.zip.CheckedInputStream;
import java.util.zip.CheckedOutputStream;
import org.apache.hadoop.conf.Configuration;
import org.apache.hadoop.fs.ChecksumException;
import org.apache.hadoop.fs.FileStatus;
import org.apache.hadoop.fs.FileSystem;
import org.apache.hadoop.fs.LocalFileSystem;
import org.apache.hadoop.fs.Path;
import org.apache.spark.sql.AnalysisException;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.BooleanType;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;

/**
 * A durable store of moment snapshots: for each value of a key (e.g. {@code date=2026-11-01}), one mergeable summary
 * of the rows with that key ({@link Snapshot}). Writing runs {@link #commit} the snapshots they computed; reading
 * runs {@link #select} keys with a Spark SQL predicate and {@link #readAll} them, without reading data. Works on any
 * Hadoop file system ({@code path.getFileSystem(conf)}); on the local file system the raw file system is used (no
 * {@code .crc} side files: every snapshot file carries its own CRC32).
 *
 * <h2>Layout</h2>
 *
 * <pre>
 * STORE/eigenmill-snapshot-store.json        the marker: {"kind": "eigenmill-snapshot-store", "format_version": 1,
 *                                            "created_at": ISO instant, "created_by": product version}
 * STORE/keys/KEY/COMMIT.snap                 one version of the snapshot of KEY, written by run COMMIT
 * STORE/commits/COMMIT.json                  the commit of run COMMIT: {"commit", "created_at", "product_version",
 *                                            "keys": [{"columns", "types", "values"}, ...]} (the keys it wrote)
 * STORE/commits/.tmp-COMMIT.json             a commit file being written (never read)
 * </pre>
 *
 * KEY is, for each key column, {@code col=value} with column and value percent-encoded
 * ({@link URLEncoder}, UTF-8), joined with {@code ,}; a null value is written {@code !null} (an encoded string
 * never holds {@code !}). COMMIT is the run's commit id: the epoch millis zero-padded to 15 digits, {@code -}, a
 * random UUID, so that names sort by time (within one JVM the millis are made strictly increasing).
 *
 * <h2>Commit protocol</h2>
 *
 * <ol>
 *   <li>A run writes every snapshot as a version file {@code keys/KEY/COMMIT.snap}. Nothing is visible yet.
 *   <li>It writes {@code commits/.tmp-COMMIT.json} and renames it to {@code commits/COMMIT.json}: that one rename
 *       makes all of the run's snapshots visible together (on the local file system and HDFS a rename is atomic).
 *   <li>Readers know only committed versions: the commit files are the index. For each key, the committed version
 *       with the greatest commit id wins (two runs on one key: the later commit id wins, whichever renamed first).
 *   <li>After the rename, best effort (a failure to delete is harmless: readers ignore what is left): the run deletes the
 *       superseded committed versions of the keys it wrote, the commit files none of whose keys it still wins, the
 *       orphan version files (whose commit file does not exist) and temporary commit files of commit ids more than
 *       one hour old, anywhere in the store.
 * </ol>
 *
 * A run that fails before its commit file is in place deletes its version files (best effort) and rethrows; one that
 * is killed leaves orphans, which readers ignore and a later commit deletes once they are an hour old. No shared file
 * is ever rewritten: each commit is its own file, so concurrent runs on different keys never lose each other's
 * snapshots. A reader racing a cleanup that deletes the version it was about to read reads the index again once.
 *
 * <h2>Snapshot file format (version 1)</h2>
 *
 * Binary, big-endian:
 *
 * <ol>
 *   <li>8 bytes: the magic {@code EMSNAP01} (ASCII);
 *   <li>4 bytes: the length L of the header, then L bytes of UTF-8 JSON: {@code format_version},
 *       {@code product_version}, {@code key} ({@code columns}, {@code types}, {@code values}), {@code features},
 *       {@code feature_types}, {@code fingerprint}, {@code group_columns}, {@code group_types}, {@code source},
 *       {@code d}, {@code entry_count}, {@code entries}: per entry {@code group} (null, or the values as text),
 *       {@code rows_read}, {@code rows_used}, {@code missing_cells} (d counts), {@code n};
 *   <li>for each entry in order: {@code shift[d]}, {@code mean[d]}, {@code packedM2[d(d+1)/2]} as raw IEEE 754 bits
 *       ({@link DataOutputStream#writeDouble}, so every double round-trips bit for bit);
 *   <li>8 bytes: the CRC32 ({@link CRC32#getValue()} as a long) of every byte before it.
 * </ol>
 *
 * A reader checks the magic, that the file is exactly as long as its header says, and the CRC; it refuses a format
 * version above {@link #FORMAT_VERSION}.
 */
public final class SnapshotStore {
  /** The snapshot file format and store layout this product writes and reads. */
  public static final int FORMAT_VERSION = 1;
  public static final String MARKER = "eigenmill-snapshot-store.json";
  static final String KIND = "eigenmill-snapshot-store";
  static final String KEYS = "keys";
  static final String COMMITS = "commits";
  static final String SNAP_SUFFIX = ".snap";
  static final String COMMIT_SUFFIX = ".json";
  static final String TMP_PREFIX = ".tmp-";
  /** The setting reading runs name snapshots by, in messages about snapshots. */
  static final String SNAPSHOTS_KEY = "input.snapshots";
  static final String WHERE_KEY = "input.where";
  static final byte[] MAGIC = "EMSNAP01".getBytes(StandardCharsets.US_ASCII);
  /** Orphans (version files without a commit file) younger than this are left alone: their run may be writing. */
  static final long ORPHAN_AGE_MILLIS = 3_600_000L;
  static final Pattern COMMIT_ID = Pattern.compile("\\d{15}-[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}");
  private static final String NULL_VALUE = "!null";
  private static final ObjectMapper JSON = new ObjectMapper();
  private static final AtomicLong LAST_MILLIS = new AtomicLong();
  private static final int CHUNK_DOUBLES = 8192;

  /** Failure injection for tests: called at each step of a commit; may throw. */
  interface Hook {
    void at(String step, SnapshotKey key) throws IOException;
  }

  private final FileSystem fs;
  private final Path root;
  private final String settingKey;
  private final String shownPath;
  Hook hook = (step, key) -> { };

  private SnapshotStore(FileSystem fs, Path root, String settingKey, String shownPath) {
    this.fs = fs;
    this.root = root;
    this.settingKey = settingKey;
    this.shownPath = shownPath;
  }

  // ---------------------------------------------------------------------------------------------------- opening

  /**
   * Opens the store at {@code path}. {@code create = true} (writing runs): a missing folder or an empty folder
   * becomes a new store (marker file written); {@code create = false} (reading runs): the store must exist. A folder
   * that exists, is not empty and has no store marker, or a path that is a file, is an {@link InvalidJobException}
   * naming {@code settingKey}, the path and the rule.
   */
  public static SnapshotStore open(Configuration conf, String settingKey, String path, boolean create) {
    String shown = settingKey + " = " + path + ": ";
    try {
      Path p = new Path(path);
      FileSystem fs = p.getFileSystem(conf);
      if (fs instanceof LocalFileSystem local) {
        fs = local.getRawFileSystem(); // each snapshot file has its own CRC; no .crc side files
      }
      p = fs.makeQualified(p);
      SnapshotStore store = new SnapshotStore(fs, p, settingKey, path);
      Path marker = new Path(p, MARKER);
      if (!fs.exists(p)) {
        if (!create) {
          throw new InvalidJobException(shown + "no snapshot store there: the folder does not exist (a reading run"
              + " needs a store that a writing run created)");
        }
        fs.mkdirs(p);
        store.writeMarker();
      } else if (fs.getFileStatus(p).isFile()) {
        throw new InvalidJobException(shown + "is not a snapshot store: it is a file; a snapshot store is a folder"
            + " holding " + MARKER);
      } else if (!fs.exists(marker)) {
        boolean empty = true;
        for (FileStatus s : fs.listStatus(p)) {
          empty &= s.getPath().getName().startsWith(TMP_PREFIX); // another run creating the store
        }
        if (!empty) {
          throw new InvalidJobException(shown + "is not a snapshot store: the folder is not empty and holds no "
              + MARKER + "; choose a new or empty folder, or the folder of an existing store");
        }
        if (!create) {
          throw new InvalidJobException(shown + "is not a snapshot store: the folder is empty (no " + MARKER
              + "); a reading run needs a store that a writing run created");
        }
        store.writeMarker();
      }
      store.checkMarker();
      return store;
    } catch (IOException e) {
      throw new UncheckedIOException("cannot open the snapshot store " + shown, e);
    }
  }

  private void writeMarker() throws IOException {
    ObjectNode m = JSON.createObjectNode();
    m.put("kind", KIND);
    m.put("format_version", FORMAT_VERSION);
    m.put("created_at", Instant.now().toString());
    m.put("created_by", Version.current());
    Path tmp = new Path(root, TMP_PREFIX + UUID.randomUUID() + "-" + MARKER);
    try (OutputStream out = fs.create(tmp, false)) {
      out.write(JSON.writerWithDefaultPrettyPrinter().writeValueAsBytes(m));
    }
    Path marker = new Path(root, MARKER);
    if (!fs.rename(tmp, marker) && !fs.exists(marker)) {
      fs.delete(tmp, false);
      throw new IOException("rename of " + tmp + " to " + marker + " failed");
    }
    fs.delete(tmp, false); // a rename that lost a race to another creator leaves it
  }

  private void checkMarker() throws IOException {
    Path marker = new Path(root, MARKER);
    JsonNode m;
    try (InputStream in = fs.open(marker)) {
      m = JSON.readTree(in);
    } catch (IOException e) {
      throw new InvalidJobException(settingKey + " = " + shownPath + ": is not a snapshot store: " + MARKER
          + " is not readable JSON (" + InputFilter.firstLine(e) + ")");
    }
    if (m == null || !KIND.equals(m.path("kind").asText())) {
      throw new InvalidJobException(settingKey + " = " + shownPath + ": is not a snapshot store: " + MARKER
          + " does not say kind = " + KIND);
    }
    int version = m.path("format_version").asInt(-1);
    if (version > FORMAT_VERSION || version < 1) {
      throw new InvalidJobException(settingKey + " = " + shownPath + ": the snapshot store has format version "
          + version + "; this product (eigenmill " + Version.current() + ") reads format version " + FORMAT_VERSION
          + " only");
    }
  }

  public String path() {
    return root.toString();
  }

  // ---------------------------------------------------------------------------------------------------- commit

  /**
   * Writes the snapshots of one run so that they become visible together or not at all (see the class comment). A
   * key the store already holds is replaced; other keys are untouched. Nothing happens for an empty list.
   */
  public void commit(List<Snapshot> snapshots) {
    if (snapshots.isEmpty()) {
      return;
    }
    Set<SnapshotKey> seen = new HashSet<>();
    for (Snapshot s : snapshots) {
      check(s);
      if (!seen.add(s.key())) {
        throw new IllegalArgumentException("the key " + s.key().display() + " is twice in one commit");
      }
    }
    String id = newCommitId();
    List<Path> written = new ArrayList<>();
    Path tmp = new Path(commitsDir(), TMP_PREFIX + id + COMMIT_SUFFIX);
    Path commitFile = new Path(commitsDir(), id + COMMIT_SUFFIX);
    try {
      fs.mkdirs(commitsDir());
      for (Snapshot s : snapshots) {
        hook.at("version", s.key());
        Path v = versionPath(s.key(), id);
        written.add(v);
        writeSnapshot(v, s);
      }
      hook.at("commit", null);
      try (OutputStream out = fs.create(tmp, false)) {
        out.write(JSON.writerWithDefaultPrettyPrinter().writeValueAsBytes(commitJson(id, snapshots)));
      }
      hook.at("rename", null);
      if (!fs.rename(tmp, commitFile) && !fs.exists(commitFile)) {
        throw new IOException("rename of " + tmp + " to " + commitFile + " failed");
      }
    } catch (IOException | RuntimeException | Error e) {
      deleteQuietly(tmp);
      for (Path v : written) {
        deleteQuietly(v);
      }
      if (e instanceof IOException io) {
        throw new UncheckedIOException("cannot commit snapshots to the store " + root, io);
      }
      if (e instanceof RuntimeException r) {
        throw r;
      }
      throw (Error) e;
    }
    cleanUp(snapshots.stream().map(Snapshot::key).toList());
  }

  private static void check(Snapshot s) {
    int d = s.d();
    if (s.formatVersion() != FORMAT_VERSION) {
      throw new IllegalArgumentException("snapshot " + s.key().display() + " has format version "
          + s.formatVersion() + "; this product writes " + FORMAT_VERSION);
    }
    if (s.featureTypes().size() != d || s.groupTypes().size() != s.groupColumns().size()) {
      throw new IllegalArgumentException("snapshot " + s.key().display() + ": one type per feature and per group"
          + " column needed");
    }
    if (s.entries().isEmpty()) {
      throw new IllegalArgumentException("snapshot " + s.key().display() + " has no entries");
    }
    if (s.productVersion() == null
        || !PcaModel.fingerprint(s.features(), s.featureTypes()).equals(s.fingerprint())) {
      throw new IllegalArgumentException("snapshot " + s.key().display() + ": a product version and the"
          + " fingerprint of its features (PcaModel.fingerprint) are needed, found " + s.productVersion() + " and "
          + s.fingerprint());
    }
    for (SnapshotEntry e : s.entries()) {
      String shape = e.shapeProblem(d);
      if (shape != null) {
        throw new IllegalArgumentException("snapshot " + s.key().display() + ": " + shape);
      }
      int groups = s.groupColumns().size();
      if (groups == 0 ? e.group() != null : e.group() == null || e.group().size() != groups) {
        throw new IllegalArgumentException("snapshot " + s.key().display() + ": entry group " + e.group()
            + " does not fit the group columns " + s.groupColumns());
      }
    }
  }

  /** Zero-padded epoch millis, "-", a random UUID; the millis strictly increase within this JVM. */
  static String newCommitId() {
    long now = System.currentTimeMillis();
    long millis = LAST_MILLIS.accumulateAndGet(now, (last, t) -> Math.max(last + 1, t));
    return String.format("%015d-%s", millis, UUID.randomUUID());
  }

  static long commitMillis(String commitId) {
    return Long.parseLong(commitId.substring(0, 15));
  }

  private ObjectNode commitJson(String id, List<Snapshot> snapshots) {
    ObjectNode c = JSON.createObjectNode();
    c.put("commit", id);
    c.put("created_at", Instant.now().toString());
    c.put("product_version", Version.current());
    ArrayNode keys = c.putArray("keys");
    for (Snapshot s : snapshots) {
      keys.add(keyJson(s.key()));
    }
    return c;
  }

  /** Best effort: superseded versions of {@code wrote}, dead commit files, old orphans and temporary files. */
  private void cleanUp(List<SnapshotKey> wrote) {
    try {
      Index index = index();
      long now = System.currentTimeMillis();
      for (SnapshotKey k : wrote) {
        String winner = index.winners.get(k);
        if (winner == null) {
          continue;
        }
        for (String c : index.commitsOf.getOrDefault(k, List.of())) {
          if (c.compareTo(winner) < 0) {
            deleteQuietly(versionPath(k, c));
          }
        }
      }
      Set<String> alive = new HashSet<>(index.winners.values());
      for (String c : index.commits.keySet()) {
        if (!alive.contains(c)) {
          deleteQuietly(new Path(commitsDir(), c + COMMIT_SUFFIX));
        }
      }
      for (FileStatus f : listQuietly(commitsDir())) {
        String name = f.getPath().getName();
        if (name.startsWith(TMP_PREFIX) && name.endsWith(COMMIT_SUFFIX)) {
          String id = name.substring(TMP_PREFIX.length(), name.length() - COMMIT_SUFFIX.length());
          if (COMMIT_ID.matcher(id).matches() && now - commitMillis(id) > ORPHAN_AGE_MILLIS) {
            deleteQuietly(f.getPath());
          }
        }
      }
      for (FileStatus folder : listQuietly(keysDir())) {
        for (FileStatus f : listQuietly(folder.getPath())) {
          String id = commitIdOf(f.getPath().getName());
          if (id != null && !index.commits.containsKey(id) && now - commitMillis(id) > ORPHAN_AGE_MILLIS
              && !fs.exists(new Path(commitsDir(), id + COMMIT_SUFFIX))) {
            deleteQuietly(f.getPath());
          }
        }
      }
    } catch (IOException | RuntimeException e) {
      // best effort: leftovers are ignored by readers and deleted by a later commit
    }
  }

  private List<FileStatus> listQuietly(Path dir) {
    try {
      return fs.exists(dir) ? Arrays.asList(fs.listStatus(dir)) : List.of();
    } catch (IOException e) {
      return List.of();
    }
  }

  private void deleteQuietly(Path p) {
    try {
      fs.delete(p, false);
    } catch (IOException | RuntimeException e) {
      // harmless: an orphan or superseded file is ignored by readers
    }
  }

  /** The commit id of a version file name, or null when the name is not one. */
  static String commitIdOf(String fileName) {
    if (!fileName.endsWith(SNAP_SUFFIX)) {
      return null;
    }
    String id = fileName.substring(0, fileName.length() - SNAP_SUFFIX.length());
    return COMMIT_ID.matcher(id).matches() ? id : null;
  }

  // ---------------------------------------------------------------------------------------------------- index

  /** What the commit files say: each commit's keys, each key's committed versions and its winner. */
  private record Index(Map<String, List<SnapshotKey>> commits, Map<SnapshotKey, List<String>> commitsOf,
      Map<SnapshotKey, String> winners) {}

  private Index index() throws IOException {
    Map<String, List<SnapshotKey>> commits = new HashMap<>();
    Map<SnapshotKey, List<String>> commitsOf = new LinkedHashMap<>();
    Map<SnapshotKey, String> winners = new LinkedHashMap<>();
    if (!fs.exists(commitsDir())) {
      return new Index(commits, commitsOf, winners);
    }
    for (FileStatus f : fs.listStatus(commitsDir())) {
      String name = f.getPath().getName();
      if (!name.endsWith(COMMIT_SUFFIX) || name.startsWith(".")) {
        continue;
      }
      String id = name.substring(0, name.length() - COMMIT_SUFFIX.length());
      if (!COMMIT_ID.matcher(id).matches()) {
        continue;
      }
      JsonNode c;
      try (InputStream in = fs.open(f.getPath())) {
        c = JSON.readTree(in);
      } catch (FileNotFoundException e) {
        continue; // deleted by a concurrent cleanup: none of its versions won any more
      } catch (IOException e) {
        throw new InvalidJobException(settingKey + " = " + shownPath + ": the commit file " + f.getPath()
            + " is not readable JSON (" + InputFilter.firstLine(e) + "); the store is damaged");
      }
      List<SnapshotKey> keys = new ArrayList<>();
      for (JsonNode k : c.path("keys")) {
        SnapshotKey key = keyOf(k, f.getPath().toString());
        keys.add(key);
        commitsOf.computeIfAbsent(key, x -> new ArrayList<>()).add(id);
        winners.merge(key, id, (a, b) -> a.compareTo(b) >= 0 ? a : b);
      }
      commits.put(id, keys);
    }
    return new Index(commits, commitsOf, winners);
  }

  /** The committed keys (the newest committed version of each), in no particular order. */
  public List<SnapshotKey> keys() {
    try {
      return new ArrayList<>(index().winners.keySet());
    } catch (IOException e) {
      throw new UncheckedIOException("cannot list the snapshot store " + root, e);
    }
  }

  // ---------------------------------------------------------------------------------------------------- reading

  /** Reads one committed snapshot (bit-exact doubles); an {@link InvalidJobException} naming the key if absent. */
  public Snapshot read(SnapshotKey key) {
    try {
      return read(index(), key);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot read the snapshot " + key.display() + " from " + root, e);
    }
  }

  /** Reads {@code key}'s winner in {@code index}; once more with a fresh index if a cleanup deleted it meanwhile. */
  private Snapshot read(Index index, SnapshotKey key) throws IOException {
    for (int attempt = 0; ; attempt++) {
      String winner = index.winners.get(key);
      if (winner == null) {
        throw new InvalidJobException(SNAPSHOTS_KEY + ": the snapshot store " + shownPath + " holds no snapshot"
            + " for the key " + key.display() + " (" + key.layout() + ")");
      }
      Path v = versionPath(key, winner);
      if (attempt == 0) {
        hook.at("read", key);
      }
      if (attempt == 0 && !fs.exists(v)) {
        index = index(); // superseded and cleaned up after the index was read: read the index again
        continue;
      }
      Snapshot s = readSnapshot(v);
      if (!s.key().equals(key)) {
        throw new InvalidJobException(SNAPSHOTS_KEY + " = " + v + ": the file holds the key " + s.key().display()
            + " where the store's index says " + key.display() + "; the store is damaged");
      }
      return s;
    }
  }

  /**
   * Reads the selected snapshots and checks they can be merged: same features, feature types and group columns
   * (and group types); otherwise an {@link InvalidJobException} naming {@code input.snapshots}, two keys that differ
   * and what differs.
   */
  public List<Snapshot> readAll(List<SnapshotKey> keys) {
    List<Snapshot> out = new ArrayList<>(keys.size());
    Index index;
    try {
      index = index(); // one listing of the commit files for all the keys
    } catch (IOException e) {
      throw new UncheckedIOException("cannot list the snapshot store " + root, e);
    }
    for (SnapshotKey k : keys) {
      Snapshot s;
      try {
        s = read(index, k);
      } catch (IOException e) {
        throw new UncheckedIOException("cannot read the snapshot " + k.display() + " from " + root, e);
      }
      if (!out.isEmpty()) {
        String problem = mergeProblem(out.get(0), s);
        if (problem != null) {
          throw new InvalidJobException(SNAPSHOTS_KEY + " = " + shownPath + ": the snapshots "
              + out.get(0).key().display() + " and " + s.key().display() + " cannot be merged: " + problem);
        }
      }
      out.add(s);
    }
    return out;
  }

  /** What makes {@code b} unmergeable with {@code a}, or null. */
  static String mergeProblem(Snapshot a, Snapshot b) {
    String ka = a.key().display();
    String kb = b.key().display();
    String lists = listProblem("feature", a.features(), b.features(), ka, kb);
    if (lists != null) {
      return lists;
    }
    for (int i = 0; i < a.d(); i++) {
      if (!a.featureTypes().get(i).equals(b.featureTypes().get(i))) {
        return "feature types differ: " + a.features().get(i) + " is " + a.featureTypes().get(i) + " in " + ka
            + " and " + b.featureTypes().get(i) + " in " + kb;
      }
    }
    lists = listProblem("group column", a.groupColumns(), b.groupColumns(), ka, kb);
    if (lists != null) {
      return lists;
    }
    for (int i = 0; i < a.groupColumns().size(); i++) {
      if (!a.groupTypes().get(i).equals(b.groupTypes().get(i))) {
        return "group column types differ: " + a.groupColumns().get(i) + " is " + a.groupTypes().get(i) + " in "
            + ka + " and " + b.groupTypes().get(i) + " in " + kb;
      }
    }
    return null;
  }

  private static String listProblem(String what, List<String> a, List<String> b, String ka, String kb) {
    if (a.equals(b)) {
      return null;
    }
    int i = 0;
    while (i < a.size() && i < b.size() && a.get(i).equals(b.get(i))) {
      i++;
    }
    return what + " lists differ: " + ka + " has " + a.size() + " " + what + "s, " + kb + " has " + b.size()
        + "; first difference at position " + (i + 1) + ": " + (i < a.size() ? a.get(i) : "(none)") + " vs "
        + (i < b.size() ? b.get(i) : "(none)");
  }

  // ---------------------------------------------------------------------------------------------------- select

  /**
   * Keys selected by a Spark SQL predicate over the key columns (empty or null {@code where} = all keys), sorted in
   * key order (by the typed values, ascending, nulls first). The keys become a small DataFrame of strings, each
   * column cast to its stored type, filtered with {@code where}, ordered by the key columns and collected.
   */
  public List<SnapshotKey> select(SparkSession spark, String where) {
    List<SnapshotKey> keys = keys();
    boolean all = where == null || where.isBlank();
    if (keys.isEmpty()) {
      throw new InvalidJobException(settingKey + " = " + shownPath + ": the snapshot store holds no committed"
          + " snapshots" + (all ? "" : " (" + WHERE_KEY + " = \"" + where + "\")") + "; a writing run fills it");
    }
    keys.sort((x, y) -> String.join("\u0000", x.columns()).compareTo(String.join("\u0000", y.columns())));
    SnapshotKey first = keys.get(0);
    for (SnapshotKey k : keys) {
      if (!k.columns().equals(first.columns()) || !k.types().equals(first.types())) {
        throw new InvalidJobException(settingKey + " = " + shownPath + ": the store holds keys over different key"
            + " columns: " + first.display() + " (" + first.layout() + ") and " + k.display() + " (" + k.layout()
            + "); a snapshot store keeps one key layout");
      }
    }
    List<String> columns = first.columns();
    String index = "__eigenmill_key_" + UUID.randomUUID().toString().replace("-", "");
    StructType schema = new StructType().add(index, DataTypes.IntegerType, false);
    for (String c : columns) {
      schema = schema.add(c, DataTypes.StringType, true);
    }
    List<Row> rows = new ArrayList<>(keys.size());
    for (int i = 0; i < keys.size(); i++) {
      Object[] r = new Object[columns.size() + 1];
      r[0] = i;
      for (int j = 0; j < columns.size(); j++) {
        r[j + 1] = keys.get(i).values().get(j);
      }
      rows.add(RowFactory.create(r));
    }
    Column[] typed = new Column[columns.size() + 1];
    Column[] order = new Column[columns.size()];
    typed[0] = functions.col(index);
    for (int j = 0; j < columns.size(); j++) {
      String quoted = "`" + columns.get(j).replace("`", "``") + "`";
      typed[j + 1] = functions.col(quoted).cast(first.types().get(j)).as(columns.get(j));
      order[j] = functions.col(quoted).asc_nulls_first();
    }
    Dataset<Row> table;
    try {
      table = spark.createDataFrame(rows, schema).select(typed);
    } catch (RuntimeException e) {
      throw new InvalidJobException(settingKey + " = " + shownPath + ": the key columns " + first.layout()
          + " are not Spark SQL types the keys can be cast to: " + InputFilter.firstLine(e));
    }
    Dataset<Row> filtered = table;
    if (!all) {
      String problem = whereProblem(table, where, first);
      if (problem != null) {
        throw new InvalidJobException(problem);
      }
      filtered = table.filter(functions.expr(where));
    }
    List<Row> picked = filtered.orderBy(order).select(index).collectAsList();
    if (picked.isEmpty()) {
      List<Row> every = table.orderBy(order).select(index).collectAsList();
      SnapshotKey low = keys.get(every.get(0).getInt(0));
      SnapshotKey high = keys.get(every.get(every.size() - 1).getInt(0));
      throw new InvalidJobException(WHERE_KEY + " = \"" + where + "\": selects none of the " + keys.size()
          + " snapshots in the store " + settingKey + " = " + shownPath + " (keys from " + low.display() + " to "
          + high.display() + ")");
    }
    List<SnapshotKey> out = new ArrayList<>(picked.size());
    for (Row r : picked) {
      out.add(keys.get(r.getInt(0)));
    }
    return out;
  }

  private String whereProblem(Dataset<Row> table, String where, SnapshotKey layout) {
    String shown = WHERE_KEY + " = \"" + where + "\": ";
    String available = " (key columns of the store " + shownPath + ": " + layout.layout() + ")";
    Column predicate;
    try {
      predicate = functions.expr(where);
    } catch (Exception e) {
      return shown + "not a Spark SQL expression: " + InputFilter.firstLine(e) + available;
    }
    DataType type;
    try {
      type = table.select(predicate).schema().fields()[0].dataType();
    } catch (Exception e) {
      if (InputFilter.isParseError(e)) { // Spark 4 parses a column's expression when it is first used
        return shown + "not a Spark SQL expression: " + InputFilter.firstLine(e) + available;
      }
      if (e instanceof AnalysisException a && a.getErrorClass() != null
          && a.getErrorClass().startsWith("UNRESOLVED_COLUMN")) {
        String column = a.getMessageParameters().getOrDefault("objectName", "?").replace("`", "");
        return shown + "column " + column + " is not a key column" + available
            + "; over a snapshot store the predicate may name only the key columns";
      }
      return shown + "not a predicate over the key columns: " + InputFilter.firstLine(e) + available;
    }
    if (!(type instanceof BooleanType)) {
      return shown + "the expression has type " + type.simpleString() + "; " + WHERE_KEY
          + " must be a boolean predicate over the key columns" + available;
    }
    try {
      table.filter(predicate).queryExecution().assertAnalyzed();
    } catch (Exception e) {
      return shown + "not a row predicate: " + InputFilter.firstLine(e) + available;
    }
    return null;
  }

  // ---------------------------------------------------------------------------------------------------- sizes

  /**
   * Bytes a snapshot of {@code d} features and {@code groups} groups (0: no groups, one entry) takes on disk: the
   * doubles exactly, the JSON header estimated (600 bytes, 40 a feature name and type, per entry 120 bytes and 20 a
   * missing-cell count).
   */
  public static long bytesPerSnapshot(int d, int groups) {
    long entries = Math.max(1, groups);
    long doubles = 2L * d + (long) d * (d + 1) / 2;
    long header = 600 + 40L * d + entries * (120 + 20L * d);
    return MAGIC.length + 4 + header + entries * 8 * doubles + 8;
  }

  // ---------------------------------------------------------------------------------------------------- paths

  private Path keysDir() {
    return new Path(root, KEYS);
  }

  private Path commitsDir() {
    return new Path(root, COMMITS);
  }

  Path versionPath(SnapshotKey key, String commitId) {
    return new Path(new Path(keysDir(), folderName(key)), commitId + SNAP_SUFFIX);
  }

  /** {@code col=value} pairs, column and value percent-encoded (URLEncoder, UTF-8), joined by ","; null: !null. */
  static String folderName(SnapshotKey key) {
    StringBuilder b = new StringBuilder();
    for (int i = 0; i < key.columns().size(); i++) {
      if (i > 0) {
        b.append(',');
      }
      String v = key.values().get(i);
      b.append(URLEncoder.encode(key.columns().get(i), StandardCharsets.UTF_8)).append('=')
          .append(v == null ? NULL_VALUE : URLEncoder.encode(v, StandardCharsets.UTF_8));
    }
    return b.toString();
  }

  // ---------------------------------------------------------------------------------------------------- files

  private static ObjectNode keyJson(SnapshotKey k) {
    ObjectNode n = JSON.createObjectNode();
    strings(n.putArray("columns"), k.columns());
    strings(n.putArray("types"), k.types());
    strings(n.putArray("values"), k.values());
    return n;
  }

  private static void strings(ArrayNode a, List<String> values) {
    for (String v : values) {
      if (v == null) {
        a.addNull();
      } else {
        a.add(v);
      }
    }
  }

  private static SnapshotKey keyOf(JsonNode n, String file) {
    try {
      return new SnapshotKey(strings(n.get("columns"), false), strings(n.get("types"), false),
          strings(n.get("values"), true));
    } catch (RuntimeException e) {
      throw new InvalidJobException(SNAPSHOTS_KEY + " = " + file + ": a key in the file is malformed ("
          + e.getMessage() + "); the store is damaged");
    }
  }

  private static List<String> strings(JsonNode a, boolean nulls) {
    if (a == null || !a.isArray()) {
      throw new IllegalArgumentException("a list of strings is missing");
    }
    List<String> out = new ArrayList<>(a.size());
    for (JsonNode v : a) {
      if (v.isNull() && nulls) {
        out.add(null);
      } else if (v.isTextual()) {
        out.add(v.asText());
      } else {
        throw new IllegalArgumentException("not a string: " + v);
      }
    }
    return out;
  }

  /** Package-private for tests: writes one version file (also a stray one, to simulate a killed run). */
  void writeSnapshot(Path file, Snapshot s) throws IOException {
    int d = s.d();
    ObjectNode h = JSON.createObjectNode();
    h.put("format_version", s.formatVersion());
    h.put("product_version", s.productVersion());
    h.set("key", keyJson(s.key()));
    strings(h.putArray("features"), s.features());
    strings(h.putArray("feature_types"), s.featureTypes());
    h.put("fingerprint", s.fingerprint());
    strings(h.putArray("group_columns"), s.groupColumns());
    strings(h.putArray("group_types"), s.groupTypes());
    h.put("source", s.source());
    h.put("d", d);
    h.put("entry_count", s.entries().size());
    ArrayNode entries = h.putArray("entries");
    for (SnapshotEntry e : s.entries()) {
      ObjectNode en = entries.addObject();
      if (e.group() == null) {
        en.putNull("group");
      } else {
        strings(en.putArray("group"), e.group());
      }
      en.put("rows_read", e.rowsRead());
      en.put("rows_used", e.rowsUsed());
      ArrayNode missing = en.putArray("missing_cells");
      for (long m : e.missingCells()) {
        missing.add(m);
      }
      en.put("n", e.n());
    }
    byte[] header = JSON.writeValueAsBytes(h);
    CRC32 crc = new CRC32();
    try (OutputStream raw = fs.create(file, false)) {
      CheckedOutputStream checked = new CheckedOutputStream(new BufferedOutputStream(raw, 1 << 16), crc);
      DataOutputStream out = new DataOutputStream(checked);
      out.write(MAGIC);
      out.writeInt(header.length);
      out.write(header);
      ByteBuffer buf = ByteBuffer.allocate(8 * CHUNK_DOUBLES);
      for (SnapshotEntry e : s.entries()) {
        for (double[] a : new double[][] {e.shift(), e.mean(), e.packedM2()}) {
          for (int i = 0; i < a.length; i += CHUNK_DOUBLES) {
            int len = Math.min(CHUNK_DOUBLES, a.length - i);
            buf.clear();
            buf.asDoubleBuffer().put(a, i, len); // raw bits, big-endian: what DataOutputStream.writeDouble writes
            out.write(buf.array(), 0, 8 * len);
          }
        }
      }
      out.flush();
      long value = crc.getValue();
      out.writeLong(value);
      out.flush();
    }
  }

  private InvalidJobException corrupt(Path file, String rule) {
    return new InvalidJobException(SNAPSHOTS_KEY + " = " + file + ": " + rule);
  }

  /** Reads and checks one version file (magic, length, CRC32, format version). */
  Snapshot readSnapshot(Path file) throws IOException {
    long length = fs.getFileStatus(file).getLen();
    long fixed = MAGIC.length + 4 + 8;
    if (length < fixed) {
      throw corrupt(file, "truncated: " + length + " bytes, fewer than the " + fixed + " of an empty snapshot file");
    }
    CRC32 crc = new CRC32();
    byte[] header;
    double[] doubles;
    long stored;
    long computed;
    try (InputStream raw = fs.open(file)) {
      DataInputStream in = new DataInputStream(new CheckedInputStream(new BufferedInputStream(raw, 1 << 16), crc));
      byte[] magic = new byte[MAGIC.length];
      in.readFully(magic);
      if (!Arrays.equals(magic, MAGIC)) {
        throw corrupt(file, "not an eigenmill snapshot file: it does not start with the magic EMSNAP01");
      }
      int headerLength = in.readInt();
      if (headerLength < 0 || headerLength > length - fixed) {
        throw corrupt(file, "truncated or corrupt: the header length " + headerLength + " does not fit the file's "
            + length + " bytes");
      }
      long rest = length - fixed - headerLength;
      if (rest % 8 != 0 || rest / 8 > Integer.MAX_VALUE - 8) {
        throw corrupt(file, "truncated or corrupt: " + rest + " bytes of doubles is not a whole number of doubles");
      }
      header = new byte[headerLength];
      in.readFully(header);
      doubles = new double[(int) (rest / 8)];
      byte[] chunk = new byte[8 * CHUNK_DOUBLES];
      for (int i = 0; i < doubles.length; i += CHUNK_DOUBLES) {
        int len = Math.min(CHUNK_DOUBLES, doubles.length - i);
        in.readFully(chunk, 0, 8 * len);
        ByteBuffer.wrap(chunk, 0, 8 * len).asDoubleBuffer().get(doubles, i, len);
      }
      computed = crc.getValue();
      stored = in.readLong();
      if (in.read() != -1) {
        throw corrupt(file, "corrupt: the file grew while it was read (snapshot files are never rewritten)");
      }
    } catch (EOFException e) {
      throw corrupt(file, "truncated: the file ends before its checksum");
    } catch (ChecksumException e) {
      throw corrupt(file, "checksum mismatch reported by the file system (" + InputFilter.firstLine(e)
          + "): the file is corrupt");
    }
    if (stored != computed) {
      throw corrupt(file, String.format("checksum mismatch: CRC32 stored %08x, computed %08x: the file is corrupt;"
          + " commit the snapshot of this key again", stored, computed));
    }
    return parse(file, header, doubles);
  }

  private Snapshot parse(Path file, byte[] headerBytes, double[] doubles) {
    JsonNode h;
    try {
      h = JSON.readTree(headerBytes);
    } catch (IOException e) {
      throw corrupt(file, "the header is not JSON (" + InputFilter.firstLine(e) + ")");
    }
    int version = h.path("format_version").asInt(-1);
    if (version > FORMAT_VERSION) {
      throw corrupt(file, "snapshot format version " + version + ", written by eigenmill "
          + h.path("product_version").asText("?") + "; this product (eigenmill " + Version.current()
          + ") reads snapshot format version " + FORMAT_VERSION + " only");
    }
    try {
      if (version < 1) {
        throw new IllegalArgumentException("format_version " + version);
      }
      int d = field(h, "d").asInt();
      int count = field(h, "entry_count").asInt();
      List<String> features = strings(h.get("features"), false);
      JsonNode entriesNode = field(h, "entries");
      if (features.size() != d || entriesNode.size() != count) {
        throw new IllegalArgumentException("d or entry_count disagrees with the lists");
      }
      long perEntry = 2L * d + SnapshotEntry.packedLength(d);
      if (perEntry * count != doubles.length) {
        throw new IllegalArgumentException("the file holds " + doubles.length + " doubles; " + count
            + " entries of " + d + " features need " + perEntry * count);
      }
      List<SnapshotEntry> entries = new ArrayList<>(count);
      int at = 0;
      for (JsonNode en : entriesNode) {
        JsonNode g = en.get("group");
        List<String> group = g == null || g.isNull() ? null : strings(g, true);
        JsonNode mc = field(en, "missing_cells");
        long[] missing = new long[mc.size()];
        for (int i = 0; i < missing.length; i++) {
          missing[i] = mc.get(i).asLong();
        }
        double[] shift = Arrays.copyOfRange(doubles, at, at + d);
        double[] mean = Arrays.copyOfRange(doubles, at + d, at + 2 * d);
        double[] m2 = Arrays.copyOfRange(doubles, at + 2 * d, (int) (at + perEntry));
        at += (int) perEntry;
        entries.add(new SnapshotEntry(group, field(en, "rows_read").asLong(), field(en, "rows_used").asLong(),
            missing, field(en, "n").asLong(), shift, mean, m2));
      }
      JsonNode source = h.get("source");
      return new Snapshot(keyOf(field(h, "key"), file.toString()), version, field(h, "product_version").asText(),
          features, strings(h.get("feature_types"), false), field(h, "fingerprint").asText(),
          strings(h.get("group_columns"), false), strings(h.get("group_types"), false),
          source == null || source.isNull() ? null : source.asText(), Collections.unmodifiableList(entries));
    } catch (RuntimeException e) {
      if (e instanceof InvalidJobException i) {
        throw i;
      }
      throw corrupt(file, "the header does not describe a snapshot (" + e.getMessage() + ")");
    }
  }

  private static JsonNode field(JsonNode n, String name) {
    JsonNode v = n.get(name);
    if (v == null || v.isNull()) {
      throw new IllegalArgumentException("the field " + name + " is missing");
    }
    return v;
  }
}
