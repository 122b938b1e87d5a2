package io.eigenmill.engine;

import java.util.Arrays;

/**
 * A column-major block of doubles being filled by a reader, the one block type of every reader (the passes'
 * {@link BlockFiller}, the scoring pass, the k-means cache): {@code capacity} rows of d feature columns (leading
 * dimension {@link #ld}: the capacity, or while a pass's block grows the rows allocated so far), the rows filled so far ({@link #rows}), and one flag per row for the rows a missing
 * cell drops. A reader writes a slice of rows at {@link #base()} column by column, reports missing cells
 * ({@link #markMissing}), then {@link #commit}s the slice; the block is handed on when full and {@link #clear}ed.
 *
 * <p>What a missing cell (null, NaN or infinite) does is fixed when the block is made: drop its row
 * ({@link ReadMode#DROP}: the row is flagged and leaves the slice at commit, {@link #compact}), keep the row with NaN
 * in the cell ({@link ReadMode#MARK}), or take a fill value ({@link #imputing}). Missing cells may be counted per
 * column into an array the caller owns.
 *
 * <p>Cost: one block and one flag per row, allocated once per partition (no allocation per row or slice, except the
 * run list of a slice that has flagged rows); commit is O(1) for a slice without flagged rows, one read of its flags
 * and a move of its kept runs otherwise. Not thread-safe: one task fills it.
 */
public final class ColumnBlock implements BlockSink {
  private final int d;
  private final int capacity;
  /** Rows allocated: the leading dimension. Up to {@code capacity}; a growable block starts small (see {@link #of}). */
  private int ld;
  /** Columns of the values array (d, or d + 1 with the column of ones). */
  private final int columns;
  private final boolean ones;
  private double[] values;
  private boolean[] flagged;
  private boolean anyFlagged;
  private int fill;
  private final boolean drops;
  /** The value a missing cell of column j takes (impute), or null. */
  private final double[] fills;
  /** Missing cells per column, counted into the caller's array; or null. */
  private final long[] missingCells;
  /** What the reader subtracts from each column of the current block, or null. */
  private double[] origin;

  private ColumnBlock(int d, int capacity, int rows, int columns, boolean drops, double[] fills,
      long[] missingCells) {
    this.d = d;
    this.capacity = capacity;
    this.ld = Math.min(capacity, rows);
    this.columns = Math.max(1, columns);
    this.ones = columns > d;
    this.values = new double[ld * this.columns];
    this.flagged = new boolean[ld];
    this.drops = drops;
    this.fills = fills;
    this.missingCells = missingCells;
  }

  /**
   * The block of a pass over the features.
   *
   * @param onesColumn whether column d (after the features) holds 1.0 in every row: the column of ones of a
   *     shifted block ({@link BlockAggregator#addShifted}); compaction leaves it alone
   * @param missingCells where missing cells are counted per column (d entries), or null
   */
  public static ColumnBlock of(int d, int capacity, ReadMode mode, boolean onesColumn, long[] missingCells) {
    return of(d, capacity, 0, mode, onesColumn, missingCells);
  }

  /** {@link #of} allocating {@code firstRows} rows at first ({@link #FIRST_ROWS} when 0). */
  public static ColumnBlock of(int d, int capacity, int firstRows, ReadMode mode, boolean onesColumn,
      long[] missingCells) {
    int first = firstRows > 0 ? firstRows : FIRST_ROWS;
    ColumnBlock b = new ColumnBlock(d, capacity, Math.min(capacity, first), onesColumn ? d + 1 : d,
        mode == ReadMode.DROP, null, missingCells);
    if (onesColumn) {
      Arrays.fill(b.values, b.ld * d, b.ld * (d + 1), 1.0);
    }
    return b;
  }

  /**
   * Rows a pass's block allocates at first; it doubles as rows arrive, up to its capacity. A keyed pass keeps a
   * block per key, and most keys of a task with many keys hold far fewer rows than a block: their memory follows
   * their rows. The block's rows, and so the sums, are the same whatever its allocation (only the leading
   * dimension changes, which BLAS reads through).
   */
  static final int FIRST_ROWS = 64;

  /** Allocates room for {@code rows} rows (at most the capacity), keeping the rows filled so far. */
  private void grow(int rows) {
    int next = Math.min(capacity, Math.max(rows, 2 * ld));
    double[] bigger = new double[next * columns];
    for (int j = 0; j < columns; j++) {
      System.arraycopy(values, j * ld, bigger, j * next, fill);
    }
    if (ones) {
      Arrays.fill(bigger, next * d, next * (d + 1), 1.0);
    }
    values = bigger;
    flagged = Arrays.copyOf(flagged, next);
    ld = next;
  }

  /** A block whose rows with a missing cell are dropped at commit. */
  public static ColumnBlock dropping(int d, int capacity) {
    return new ColumnBlock(d, capacity, capacity, d, true, null, null);
  }

  /** A block where a missing cell of column j takes {@code fills[j]} (the array is kept, not copied). */
  public static ColumnBlock imputing(int d, int capacity, double[] fills) {
    return new ColumnBlock(d, capacity, capacity, d, false, fills, null);
  }

  /** The values: column j of the block at {@code j * ld()}. */
  @Override
  public double[] block() {
    return values;
  }

  /** Leading dimension: the rows allocated (the capacity, or fewer while a pass's block grows). */
  @Override
  public int ld() {
    return ld;
  }

  /** Row where the next slice starts: the rows filled so far. */
  @Override
  public int base() {
    return fill;
  }

  /** Rows filled (and kept) so far. */
  public int rows() {
    return fill;
  }

  public boolean isFull() {
    return fill == capacity;
  }

  /** How many of {@code wanted} rows fit. */
  public int room(int wanted) {
    int t = Math.min(wanted, capacity - fill);
    if (fill + t > ld) {
      grow(fill + t);
    }
    return t;
  }

  @Override
  public double[] origin() {
    return origin;
  }

  /** Sets what the reader subtracts from each column of the rows it writes from now on (null: nothing). */
  public void origin(double[] origin) {
    this.origin = origin;
  }

  /** Cell (row {@link #base()} + i, column j) is missing: it takes its fill value, or NaN and flags its row. */
  @Override
  public void markMissing(int i, int j) {
    int row = fill + i;
    if (missingCells != null) {
      missingCells[j]++;
    }
    if (fills != null) {
      values[j * ld + row] = fills[j];
      return;
    }
    values[j * ld + row] = Double.NaN;
    flagged[row] = true;
    anyFlagged = true;
  }

  /**
   * Accepts the {@code t} rows written at {@link #base()}: a dropping block removes the flagged ones (moving
   * {@code sources}, one int per row, along when not null), the flags are cleared. Returns the rows kept.
   */
  public int commit(int t, int[] sources) {
    int kept = t;
    if (anyFlagged) {
      kept = drops ? compact(values, d, ld, fill, t, flagged, sources) : t;
      Arrays.fill(flagged, fill, fill + t, false);
      anyFlagged = false;
    }
    fill += kept;
    return kept;
  }

  /** Empties the block (its values stay as scratch). */
  public void clear() {
    fill = 0;
  }

  /** The values array as it is, for a full block handed on whole; the block continues, empty, in a fresh array. */
  public double[] handOver() {
    double[] out = values;
    values = new double[out.length];
    fill = 0;
    return out;
  }

  /**
   * Removes the rows of slice {@code [from, from + t)} flagged in {@code bad} from every column of a column-major
   * block (leading dimension {@code ld}), keeping the order of the others, and moves {@code sources} along when it
   * is not null. Rows before the first flagged one stay where they are. Returns the rows kept.
   *
   * <p>The flags are read once; each column then moves the runs of kept rows between flagged ones with
   * {@code System.arraycopy}. Flagged rows are few where they occur at all (a missing cell here and there), and a
   * loop that tests and moves every value after the first one cost a tenth of a covariance fit's task time on a
   * table with 1.6% of its rows incomplete (JFR, 2 M x 100); the runs cost a fraction of that.
   */
  public static int compact(double[] block, int d, int ld, int from, int t, boolean[] bad, int[] sources) {
    int dropped = 0;
    for (int i = 0; i < t; i++) {
      if (bad[from + i]) {
        dropped++;
      }
    }
    if (dropped == 0) {
      return t;
    }
    int[] flagged = new int[dropped + 1];
    for (int i = 0, k = 0; i < t; i++) {
      if (bad[from + i]) {
        flagged[k++] = i;
      }
    }
    flagged[dropped] = t;
    for (int j = 0; j < d; j++) {
      moveRuns(block, j * ld + from, flagged);
    }
    if (sources != null) {
      moveRuns(sources, from, flagged);
    }
    return t - dropped;
  }

  /**
   * Moves the runs between the flagged rows of {@code flagged} (increasing slice rows, ended by the slice length) of
   * the slice starting at {@code off} down over the flagged rows ({@code a} is a double[] or an int[]).
   */
  private static void moveRuns(Object a, int off, int[] flagged) {
    int w = flagged[0];
    for (int k = 0; k + 1 < flagged.length; k++) {
      int start = flagged[k] + 1;
      int run = flagged[k + 1] - start;
      if (run > 0) {
        System.arraycopy(a, off + start, a, off + w, run);
        w += run;
      }
    }
  }
}
