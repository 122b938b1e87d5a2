package io.eigenmill.plan;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.io.SnapshotKey;
import java.util.List;
import java.util.Locale;

/**
 * What a fit does with a snapshot store: writes one snapshot per value of the key columns ({@code output.snapshots},
 * {@code snapshots.by}), or fits from the snapshots {@code input.where} selects ({@code input.snapshots}).
 *
 * @param store the store's path
 * @param writing true for {@code output.snapshots}, false for {@code input.snapshots}
 * @param by the key columns (of the input when writing, of the store when reading)
 * @param bytesPerSnapshot what one snapshot of the plan's features takes on disk
 * @param selected the keys a fit from snapshots merges, in key order (empty when writing)
 * @param rowsSelected rows in the selected snapshots (used rows; 0 when writing)
 * @param loaded the selected snapshots as the planner read and checked them (the fit merges these, not a second
 *     reading); empty when writing
 */
public record SnapshotPlan(String store, boolean writing, KeyColumns by, long bytesPerSnapshot,
    List<SnapshotKey> selected, long rowsSelected, List<io.eigenmill.io.Snapshot> loaded) {

  public SnapshotPlan(String store, boolean writing, KeyColumns by, long bytesPerSnapshot, List<SnapshotKey> selected,
      long rowsSelected) {
    this(store, writing, by, bytesPerSnapshot, selected, rowsSelected, List.of());
  }

  /** Snapshots wider than this are refused: d (d + 1) / 2 co-moments, 64 MB per snapshot at this width. */
  public static final int MAX_FEATURES = 4000;

  /** The lines {@code plan} prints. */
  List<String[]> describe() {
    String size = MemoryEstimate.human(bytesPerSnapshot) + " per snapshot";
    if (writing) {
      return List.<String[]>of(new String[] {"snapshots", "writes one per value of " + String.join(", ", by.names())
          + " to " + store + " (" + size + "; a value the store holds is replaced)"});
    }
    String keys = selected.size() <= 6 ? String.join("; ", selected.stream().map(SnapshotKey::display).toList())
        : selected.get(0).display() + " ... " + selected.get(selected.size() - 1).display();
    return List.<String[]>of(new String[] {"snapshots", String.format(Locale.ROOT, "merges %d of the store %s (%s, %,d"
        + " rows): %s", selected.size(), store, size, rowsSelected, keys)});
  }
}
