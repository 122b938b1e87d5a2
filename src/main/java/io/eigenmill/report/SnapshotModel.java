package io.eigenmill.report;

import io.eigenmill.pca.SnapshotUse;
import io.eigenmill.record.RunResult;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;

/**
 * The snapshot store of a fit: which store, whether the fit wrote its snapshots or was fitted from them, and each
 * key with its rows (read, and used in the moments), in the order of {@link SnapshotUse#keys()}.
 *
 * @param facts what the section lists above the strip
 * @param keys one per snapshot
 */
public record SnapshotModel(
    String store,
    boolean written,
    List<String> keyColumns,
    List<Fact> facts,
    List<Key> keys) {

  /**
   * One snapshot.
   *
   * @param label the key's values, as drawn under its bar ("2026-11-03"; several columns joined by " / ")
   * @param display the key as {@code col=value} pairs, for the bar's title
   */
  public record Key(String label, String display, long rowsRead, long rowsUsed) {
    public long rowsDropped() {
      return Math.max(0, rowsRead - rowsUsed);
    }
  }

  static SnapshotModel of(RunResult run) {
    if (run.fit() == null || run.fit().snapshots() == null) {
      return null;
    }
    SnapshotUse use = run.fit().snapshots();
    JobSettings.Input in = run.plan().settings().input();
    List<Key> keys = new ArrayList<>();
    long read = 0;
    long used = 0;
    for (SnapshotUse.KeyRows k : use.keys()) {
      List<String> values = new ArrayList<>();
      for (String v : k.values()) {
        values.add(v == null ? "null" : v);
      }
      keys.add(new Key(String.join(" / ", values), k.display(), k.rowsRead(), k.rowsUsed()));
      read += k.rowsRead();
      used += k.rowsUsed();
    }
    String columns = String.join(", ", use.keyColumns());
    List<Fact> facts = new ArrayList<>();
    facts.add(new Fact("Store", use.store()));
    facts.add(new Fact("This fit", use.written()
        ? "wrote one snapshot per value of " + columns + " (a value the store held already was replaced)"
        : "merged the snapshots below and read no rows"));
    if (!use.written() && in.filtered()) {
      facts.add(new Fact("Snapshots where", in.where()));
    }
    String range = keys.isEmpty() ? "" : keys.size() == 1 ? ": " + keys.get(0).label()
        : ": " + keys.get(0).label() + " to " + keys.get(keys.size() - 1).label();
    facts.add(new Fact("Snapshots", Fmt.count(keys.size()) + " by " + columns + range));
    facts.add(new Fact(use.written() ? "Rows" : "Rows in them", Fmt.count(read) + " read, " + Fmt.count(used)
        + " used, " + Fmt.count(read - used) + " dropped for missing values"));
    return new SnapshotModel(use.store(), use.written(), use.keyColumns(), facts, keys);
  }

  long maxRowsRead() {
    long max = 0;
    for (Key k : keys) {
      max = Math.max(max, Math.max(k.rowsRead(), k.rowsUsed()));
    }
    return max;
  }
}
