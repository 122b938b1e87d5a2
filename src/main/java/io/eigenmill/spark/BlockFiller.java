package io.eigenmill.spark;

import io.eigenmill.math.BlockPrep;
import java.io.Serializable;
import java.util.Arrays;

/**
 * Collects feature values of one partition into a column-major block of {@code capacity} rows and hands each full
 * block to an aggregator. Readers write a slice of rows column by column straight into {@link #block()} at
 * {@link #base()}, mark missing cells, then {@link #commit} the slice. One block and one flag array per partition:
 * no allocation per row.
 */
final class BlockFiller<A extends Serializable> {
  private final int d;
  private final int capacity;
  private final double[] block;
  private final boolean[] bad;
  private boolean anyBad;
  private int fill;
  private final ReadMode mode;
  private final BlockPrep prep;
  private final BlockAggregator<A> aggregator;
  private final A partial;
  private final ReadCounts counts;

  BlockFiller(int d, int capacity, ReadMode mode, BlockPrep prep, BlockAggregator<A> aggregator) {
    this.d = d;
    this.capacity = capacity;
    this.block = new double[capacity * Math.max(1, d)];
    this.bad = new boolean[capacity];
    this.mode = mode;
    this.prep = prep;
    this.aggregator = aggregator;
    this.partial = aggregator.zero();
    this.counts = new ReadCounts(d);
  }

  double[] block() {
    return block;
  }

  /** Leading dimension of the block. */
  int ld() {
    return capacity;
  }

  /** Row index in the block where the next slice starts. */
  int base() {
    return fill;
  }

  /** How many of {@code wanted} rows fit in the current block. */
  int room(int wanted) {
    return Math.min(wanted, capacity - fill);
  }

  /** Marks cell (row {@code base() + i}, column j) missing and stores NaN there. */
  void markMissing(int i, int j) {
    int row = fill + i;
    bad[row] = true;
    anyBad = true;
    counts.missingCells[j]++;
    block[j * capacity + row] = Double.NaN;
  }

  /** Accepts the {@code t} rows written at {@link #base()}. */
  void commit(int t) {
    counts.rowsRead += t;
    int kept = t;
    if (anyBad) {
      kept = mode == ReadMode.DROP ? compact(t) : t;
      Arrays.fill(bad, fill, fill + t, false);
      anyBad = false;
    }
    fill += kept;
    if (fill == capacity) {
      flush();
    }
  }

  private int compact(int t) {
    int dropped = 0;
    int first = -1;
    for (int i = 0; i < t; i++) {
      if (bad[fill + i]) {
        dropped++;
        first = first < 0 ? i : first;
      }
    }
    counts.rowsDropped += dropped;
    // rows before the first dropped one stay where they are
    for (int j = 0; j < d; j++) {
      int off = j * capacity + fill;
      int w = first;
      for (int i = first; i < t; i++) {
        if (!bad[fill + i]) {
          block[off + w++] = block[off + i];
        }
      }
    }
    return t - dropped;
  }

  private void flush() {
    if (fill > 0) {
      prep.apply(block, fill, capacity);
      aggregator.add(partial, block, fill, capacity);
      fill = 0;
    }
  }

  PartialResult<A> finish() {
    flush();
    return new PartialResult<>(counts, partial);
  }
}
