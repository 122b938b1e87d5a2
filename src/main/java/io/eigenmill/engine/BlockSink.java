package io.eigenmill.engine;

/**
 * Where a columnar reader copies feature values: a column-major block of doubles (leading dimension {@link #ld()})
 * whose next slice of rows starts at row {@link #base()}. The reader writes column j of the slice at
 * {@code block()[j * ld() + base() + i]} and reports each missing cell (null, NaN or infinite) once; what a missing
 * cell does (drop the row, keep NaN, impute a value) is the sink's business. A sink may ask for its values shifted
 * ({@link #origin()}): the reader then writes {@code x - origin[j]} instead of x.
 */
public interface BlockSink {
  double[] block();

  int ld();

  int base();

  /**
   * The values to subtract from each column while copying the current slice (the same for every slice of a block),
   * or null to copy the values as they are.
   */
  default double[] origin() {
    return null;
  }

  /** Cell (row {@code base() + i}, column j) is missing. */
  void markMissing(int i, int j);
}
