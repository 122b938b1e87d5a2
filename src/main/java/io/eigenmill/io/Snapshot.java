package io.eigenmill.io;

import java.util.List;

/**
 * A whole snapshot: what one key of a {@link SnapshotStore} holds. {@code fingerprint} is
 * {@link PcaModel#fingerprint(List, List)} of the features and their types; {@code groupColumns} and
 * {@code groupTypes} are empty when the fit has no groups (then there is one entry, with a null group);
 * {@code source} is free text (the input path the rows came from).
 */
public record Snapshot(SnapshotKey key, int formatVersion, String productVersion, List<String> features,
    List<String> featureTypes, String fingerprint, List<String> groupColumns, List<String> groupTypes, String source,
    List<SnapshotEntry> entries) {
  public Snapshot {
    features = List.copyOf(features);
    featureTypes = List.copyOf(featureTypes);
    groupColumns = List.copyOf(groupColumns);
    groupTypes = List.copyOf(groupTypes);
    entries = List.copyOf(entries);
  }

  /** Number of features. */
  public int d() {
    return features.size();
  }
}
