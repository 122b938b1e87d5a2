package io.eigenmill.engine;

import java.io.Serializable;

/** What a pass saw: rows read, rows dropped for missing values, and missing cells per feature. Mergeable. */
public final class ReadCounts implements Serializable {
  private static final long serialVersionUID = 1L;

  long rowsRead;
  long rowsDropped;
  final long[] missingCells;

  public ReadCounts(int d) {
    missingCells = new long[d];
  }

  public long rowsRead() {
    return rowsRead;
  }

  public long rowsDropped() {
    return rowsDropped;
  }

  public long[] missingCells() {
    return missingCells.clone();
  }

  public long totalMissingCells() {
    long s = 0;
    for (long c : missingCells) {
      s += c;
    }
    return s;
  }

  public ReadCounts merge(ReadCounts other) {
    rowsRead += other.rowsRead;
    rowsDropped += other.rowsDropped;
    for (int j = 0; j < missingCells.length; j++) {
      missingCells[j] += other.missingCells[j];
    }
    return this;
  }
}
