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
final class BlockFiller<A extends Serializable> implements PartitionPasses.SliceSink {
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

  @Override
  public double[] block() {
    return block;
  }

  /** Leading dimension of the block. */
  @Override
  public int ld() {
    return capacity;
  }

  /** Row index in the block where the next slice starts. */
  @Override
  public int base() {
    return fill;
  }

  /** How many of {@code wanted} rows fit in the current block. */
  @Override
  public int room(int wanted) {
    return Math.min(wanted, capacity - fill);
  }

  /** Marks cell (row {@code base() + i}, column j) missing and stores NaN there. */
  @Override
  public void markMissing(int i, int j) {
    int row = fill + i;
    bad[row] = true;
    anyBad = true;
    counts.missingCells[j]++;
    block[j * capacity + row] = Double.NaN;
  }

  /** Accepts the {@code t} rows written at {@link #base()}. */
  @Override
  public void commit(int t) {
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
    int kept = compact(block, d, capacity, fill, t, bad, null);
    counts.rowsDropped += t - kept;
    return kept;
  }

  /**
   * Removes the rows of slice {@code [from, from + t)} flagged in {@code bad} from every column of a column-major
   * block (leading dimension {@code ld}), keeping the order of the others, and moves {@code origins} along when it
   * is not null. Rows before the first flagged one stay where they are. Returns the rows kept.
   */
  static int compact(double[] block, int d, int ld, int from, int t, boolean[] bad, int[] origins) {
    int first = -1;
    int dropped = 0;
    for (int i = 0; i < t; i++) {
      if (bad[from + i]) {
        dropped++;
        first = first < 0 ? i : first;
      }
    }
    if (first < 0) {
      return t;
    }
    for (int j = 0; j < d; j++) {
      int off = j * ld + from;
      int w = first;
      for (int i = first; i < t; i++) {
        if (!bad[from + i]) {
          block[off + w++] = block[off + i];
        }
      }
    }
    if (origins != null) {
      int w = first;
      for (int i = first; i < t; i++) {
        if (!bad[from + i]) {
          origins[from + w++] = origins[from + i];
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
