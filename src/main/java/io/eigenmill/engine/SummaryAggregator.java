package io.eigenmill.engine;

import io.eigenmill.math.BlockSummary;

/**
 * The engine's block aggregator for any {@link BlockSummary}: each partition starts from the factory's empty summary
 * (made on the executor), its blocks go to {@code addBlock} (or, when the summary names an origin for the next block,
 * to {@code addShiftedBlock}), and partials merge with the summary's own merge, in partition order
 * ({@link OrderedMerge}). One call per block: the summaries' inner loops stay behind no virtual call.
 *
 * @param <S> the summary
 */
public final class SummaryAggregator<S extends BlockSummary<S>> implements BlockAggregator<S> {
  private static final long serialVersionUID = 1L;
  private final BlockSummary.Factory<S> factory;

  public SummaryAggregator(BlockSummary.Factory<S> factory) {
    this.factory = factory;
  }

  @Override public S zero() {
    return factory.empty();
  }

  @Override public void add(S partial, double[] block, int rows, int ld) {
    partial.addBlock(block, rows, ld);
  }

  /** The summary's origin for the next block (see {@link BlockSummary#nextOrigin}); null for most summaries. */
  @Override public double[] origin(S partial) {
    return partial.nextOrigin();
  }

  @Override public void addShifted(S partial, double[] block, int rows, int ld, double[] origin) {
    partial.addShiftedBlock(block, rows, ld, origin);
  }

  /** Folds {@code right} into {@code left} and returns it. */
  @Override public S merge(S left, S right) {
    return left.merge(right);
  }
}
