package io.eigenmill.engine;

import java.io.Serializable;

/**
 * A mergeable summary of blocks of feature rows, computed once per partition and combined in a tree. Implementations
 * are explicit static classes (never lambdas capturing a job) and must be pure functions of the rows they see, so that
 * a retried task cannot count anything twice.
 *
 * @param <A> the partial result; {@link #zero} is the identity of {@link #merge}
 */
public interface BlockAggregator<A extends Serializable> extends Serializable {
  A zero();

  /** Adds a column-major {@code rows x d} block with leading dimension {@code ld}; the block may be modified. */
  void add(A partial, double[] block, int rows, int ld);

  /**
   * The values to subtract from each column of the next block while it is copied, or null (the default) to be given
   * the values as read. When not null, the next block arrives through {@link #addShifted} with these values.
   */
  default double[] origin(A partial) {
    return null;
  }

  /**
   * Adds a block whose values are {@code x - origin[j]}, {@code origin} being what {@link #origin} returned for it;
   * column d of the block (after the d feature columns) holds 1.0 in its first {@code rows} rows. Only called on
   * aggregators whose {@link #origin} returns non-null values.
   */
  default void addShifted(A partial, double[] block, int rows, int ld, double[] origin) {
    throw new UnsupportedOperationException(getClass().getSimpleName() + " takes unshifted blocks only");
  }

  /** Combines two partials; may return (and modify) either argument. */
  A merge(A left, A right);
}
