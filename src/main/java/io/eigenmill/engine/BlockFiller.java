package io.eigenmill.engine;

import io.eigenmill.math.BlockPrep;
import java.io.Serializable;

/**
 * Collects feature values of one partition into a column-major {@link ColumnBlock} of {@code capacity} rows and hands
 * each full block to an aggregator. Readers write a slice of rows column by column straight into {@link #block()} at
 * its base, mark missing cells, then {@link #commit} the slice. One block and one flag array per partition: no
 * allocation per row. When the preparation leaves blocks unchanged and the aggregator names an origin for the next
 * block ({@link BlockAggregator#origin}), readers write the values minus that origin: the copy then does the
 * subtraction a centring sweep would do.
 */
public final class BlockFiller<A extends Serializable> implements PartitionPasses.SliceSink {
  private final ColumnBlock block;
  private final BlockPrep prep;
  private final BlockAggregator<A> aggregator;
  private final A partial;
  private final ReadCounts counts;
  /** Whether blocks may be shifted: only when the preparation leaves them as read. */
  private final boolean shifts;

  BlockFiller(int d, int capacity, int firstRows, ReadMode mode, BlockPrep prep, BlockAggregator<A> aggregator) {
    this.shifts = prep.isIdentity();
    this.counts = new ReadCounts(d);
    // shifted blocks carry a column of ones after the features (BlockAggregator.addShifted)
    this.block = ColumnBlock.of(d, capacity, firstRows, mode, shifts, counts.missingCells);
    this.prep = prep;
    this.aggregator = aggregator;
    this.partial = aggregator.zero();
  }

  /** The block being filled (a missing cell holds NaN; under {@link ReadMode#DROP} its row leaves at commit). */
  @Override
  public ColumnBlock block() {
    return block;
  }

  /** How many of {@code wanted} rows fit in the current block; an empty block takes its origin now. */
  @Override
  public int room(int wanted) {
    if (block.rows() == 0) {
      block.origin(shifts ? aggregator.origin(partial) : null);
    }
    return block.room(wanted);
  }

  /** Accepts the {@code t} rows written at the block's base. */
  @Override
  public void commit(int t) {
    counts.rowsRead += t;
    counts.rowsDropped += t - block.commit(t, null);
    if (block.isFull()) {
      flush();
    }
  }

  private void flush() {
    int rows = block.rows();
    if (rows > 0) {
      double[] origin = block.origin();
      if (origin != null) {
        aggregator.addShifted(partial, block.block(), rows, block.ld(), origin);
      } else {
        prep.apply(block.block(), rows, block.ld());
        aggregator.add(partial, block.block(), rows, block.ld());
      }
      block.clear();
    }
  }

  PartialResult<A> finish() {
    flush();
    return new PartialResult<>(counts, partial);
  }
}
