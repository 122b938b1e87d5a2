package io.eigenmill.math;

import java.io.Serializable;

/**
 * A mergeable summary of rows that takes them a column-major block at a time: the moments, column statistics, R
 * factors and sketches the passes compute once per partition, merge in partition order, and (with time windows or
 * groups) keep and merge per key. Pure math: no Spark; the engine drives any summary through one adapter.
 *
 * <p><b>Contract.</b>
 * <ul>
 *   <li><i>Empty is the identity.</i> {@link Factory#empty} has no rows; {@code empty.merge(s)} and
 *       {@code s.merge(empty)} have the state of {@code s} bit for bit (state: the serialized form; transient
 *       scratch and hints such as {@link #nextOrigin} are not state).</li>
 *   <li><i>Associative up to rounding.</i> Merging the summaries of consecutive slices of the rows, in any tree,
 *       gives the summary of all the rows within the rounding each implementation states (for sums and pairwise
 *       updates a few eps times the log of the number of merges, relative to the quantity summed); counts are
 *       exact. Callers that must repeat bit for bit merge in a fixed order (the engine's partition order).</li>
 *   <li><i>Merge folds the other side in.</i> {@code merge(other)} changes this summary and returns it;
 *       {@code other} is left unchanged and may be merged again elsewhere. Both must have the same shape, else
 *       {@link IllegalArgumentException}.</li>
 *   <li><i>Thread confinement.</i> A summary is not thread-safe: one task adds blocks to and merges into it at a
 *       time. Blocks handed to {@link #addBlock} belong to the summary for the call (it may change them, e.g.
 *       centre them in place) and are not kept.</li>
 *   <li><i>Serialization.</i> A summary and its factory are {@link Serializable}: the state travels between
 *       executors and the driver and may be stored; scratch arrays are transient and rebuilt on demand, so a
 *       deserialized summary takes blocks and merges like the original.</li>
 * </ul>
 *
 * <p>Cost: whatever the implementation states per block and per merge; the calls here are per block, never per
 * value, so an implementation's inner loops (BLAS level 3, sweeps) are not behind a virtual call.
 *
 * @param <S> the implementing type (merge takes and returns it)
 */
public interface BlockSummary<S extends BlockSummary<S>> extends Serializable {
  /**
   * Adds the {@code rows} rows of a column-major block with leading dimension {@code ld} (its d feature columns at
   * {@code j * ld}); the block may be changed.
   */
  void addBlock(double[] block, int rows, int ld);

  /**
   * The values a reader may subtract from each column of the next block while copying it, or null (the default):
   * blocks then arrive as read through {@link #addBlock}. When not null, the next block arrives through
   * {@link #addShiftedBlock} with these values. A hint, not state.
   */
  default double[] nextOrigin() {
    return null;
  }

  /**
   * Adds a block whose values are {@code x - origin[j]}, {@code origin} being what {@link #nextOrigin} returned;
   * column d of the block (after the d feature columns) holds 1.0 in its first {@code rows} rows. Only called on
   * summaries whose {@link #nextOrigin} returned non-null values.
   */
  default void addShiftedBlock(double[] block, int rows, int ld, double[] origin) {
    throw new UnsupportedOperationException(getClass().getSimpleName() + " takes unshifted blocks only");
  }

  /** Folds {@code other} into this summary and returns this; {@code other} is unchanged. */
  S merge(S other);

  /**
   * Makes the empty summary of one shape (the identity of {@link #merge}); serializable, so that executors make
   * their own. An explicit class (a record), never a lambda capturing a job. May hold what the summary's blocks
   * need beside the rows (a broadcast basis, in a package that may use Spark).
   */
  interface Factory<S extends BlockSummary<S>> extends Serializable {
    S empty();
  }
}
