package io.eigenmill.pca;

import io.eigenmill.io.Snapshot;
import java.util.List;

/**
 * What a fit did with a snapshot store: the snapshots it wrote ({@code output.snapshots}, committed by the run once
 * everything else is written) or the ones it merged ({@code input.snapshots}), with each key's rows.
 *
 * @param written true when the fit wrote the snapshots, false when it fitted from them
 * @param keys one per snapshot, in key order when merged, in the order the keys appeared in the input when written
 * @param pending the snapshots to commit to the store (written fits only; empty otherwise)
 */
public record SnapshotUse(String store, boolean written, List<String> keyColumns, List<KeyRows> keys,
    List<Snapshot> pending) {

  /**
   * One snapshot's key and rows.
   *
   * @param values the key's values as text (null for a null value)
   * @param rowsRead rows with this key that were read
   * @param rowsUsed rows with this key in the moments (without the rows dropped for missing values)
   */
  public record KeyRows(List<String> values, String display, long rowsRead, long rowsUsed) {}

  public long rowsUsed() {
    return keys.stream().mapToLong(KeyRows::rowsUsed).sum();
  }
}
