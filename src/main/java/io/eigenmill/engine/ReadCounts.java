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

  /** Counts known from elsewhere (a snapshot store's): rows read, rows dropped, missing cells per feature. */
  public static ReadCounts of(long rowsRead, long rowsDropped, long[] missingCells) {
    ReadCounts c = new ReadCounts(missingCells.length);
    c.rowsRead = rowsRead;
    c.rowsDropped = rowsDropped;
    System.arraycopy(missingCells, 0, c.missingCells, 0, missingCells.length);
    return c;
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
