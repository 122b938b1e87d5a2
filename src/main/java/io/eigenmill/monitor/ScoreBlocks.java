package io.eigenmill.monitor;

import io.eigenmill.engine.ColumnBlock;
import io.eigenmill.engine.PartitionPasses;
import io.eigenmill.monitor.math.Scorer;
import io.eigenmill.settings.Choices.MissingPolicy;
import java.util.Iterator;
import java.util.NoSuchElementException;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarBatch;

/**
 * One partition of a scoring pass, whichever reader feeds it: rows are read into a column-major block of
 * {@code blockRows} rows ({@link ColumnBlock}: missing cells drop the row or take the model mean), the block is
 * scored ({@link Scorer}), flagged and gathered ({@link PartitionGathering}: most severe rows, reconstruction errors,
 * series, samples), and its rows are handed out as internal rows. A reader only fills the block and says where block
 * row i comes from ({@link #source}); everything else is here, once. The partition's totals go to the accumulators
 * once, when its rows are exhausted.
 *
 * <p>The rows handed out are one reused view ({@link ScoredRow}) over the block and the source row: no copy, no
 * allocation per row. A view is valid until the next call of {@code next()}; Spark's row scan over these rows turns
 * each into its own binary row at once (and {@link ScoredRow#copy} makes an independent one), so nothing downstream
 * holds a view. The columnar reader hands out a batch's rows before it asks for the next batch (which reuses the
 * vectors).
 */
abstract class ScoreBlocks implements Iterator<InternalRow> {
  final ScoringPass.Spec spec;
  final ScoringPass.Layout layout;
  /** The scorer of the block being scored: the model's, or with groups the block's group's (null: unknown). */
  Scorer scorer;
  /** The block's model's columns in the block (with groups, when its features are not the block's); else null. */
  int[] columns;
  /** The block's group ({@link GroupScoring#UNKNOWN} for a group without a model); 0 without groups. */
  int group;
  double t2Limit;
  double qLimit;
  final int d;
  /** Components of the block's model. */
  int k;
  /** Score columns of the output: k, or the largest k of the groups. */
  final int outK;
  final GroupScoring groups;
  /** With groups: the per-task coder of the group columns and each code's group number (-2: not yet known). */
  final io.eigenmill.engine.KeyColumns.Coder coder;
  private int[] groupOfCode = new int[0];
  final int m;
  final int p;
  /** The block being filled and scored; {@link #x} is its values array. */
  final ColumnBlock block;
  final double[] x;
  final double[] scores;
  final double[] t2;
  final double[] q;
  /** Where block row i comes from in the reader's current source (the batch row on the columnar path). */
  final int[] origins;
  final int[] passOrdinals;
  private int pos;
  private boolean finished;
  private final ScoredRow view;
  private final PartitionGathering gathering;

  /** @param passOrdinals where the reader's source row holds pass-through column c */
  ScoreBlocks(ScoringPass.Spec spec, ScoringPass.Layout layout, ScoringPass.Counters counters, int[] passOrdinals) {
    this.spec = spec;
    this.layout = layout;
    this.scorer = spec.scorer();
    this.groups = spec.groups();
    this.d = spec.features().size();
    this.k = scorer.components();
    this.outK = spec.outputK();
    this.t2Limit = spec.t2Limit();
    this.qLimit = spec.qLimit();
    this.coder = groups == null ? null : groups.keys().coder();
    this.m = spec.blockRows();
    this.p = layout.passThrough();
    this.block = spec.missing() == MissingPolicy.IMPUTE_MEAN ? ColumnBlock.imputing(d, m, spec.imputeValues())
        : ColumnBlock.dropping(d, m);
    this.x = block.block();
    this.scores = new double[Math.max(1, m * outK)];
    this.t2 = new double[m];
    this.q = new double[m];
    this.origins = new int[m];
    this.passOrdinals = passOrdinals.clone();
    this.view = new ScoredRow(this);
    this.gathering = new PartitionGathering(spec, layout, counters, this.passOrdinals);
  }

  /** Starts a new block and fills it; false when the partition has no rows left. */
  abstract boolean fill();

  /** The source row of block row i (pass-through column c at {@code passOrdinals[c]}). */
  abstract InternalRow source(int i);

  /** Rows in the block. */
  final int rows() {
    return block.rows();
  }

  /**
   * Accepts the {@code t} rows written at the block's base (with their origins, when {@code withOrigins}); returns
   * how many stay: a row with a missing cell is dropped (and counted) unless the cell took the model mean.
   */
  int commit(int t, boolean withOrigins) {
    int kept = block.commit(t, withOrigins ? origins : null);
    gathering.dropped(t - kept);
    return kept;
  }

  // ---- the rows handed out

  @Override
  public boolean hasNext() {
    if (pos < rows()) {
      return true;
    }
    if (finished) {
      return false;
    }
    block.clear();
    pos = 0;
    if (!fill()) {
      finished = true;
      gathering.finish();
      return false;
    }
    if (group == GroupScoring.UNKNOWN) {
      // a flagged row of a group without a model: no scores, flagged by both statistics
      java.util.Arrays.fill(t2, 0, rows(), Double.NaN);
      java.util.Arrays.fill(q, 0, rows(), Double.NaN);
    } else {
      scorer.score(x, rows(), m, columns, scores, t2, q);
    }
    gathering.add(this);
    return true;
  }

  /** Makes group {@code g} the block's group: its scorer, columns and limits. */
  final void useGroup(int g) {
    group = g;
    if (g == GroupScoring.UNKNOWN) {
      scorer = null;
      columns = null;
      k = 0;
      t2Limit = Double.NaN;
      qLimit = Double.NaN;
      return;
    }
    scorer = groups.scorers()[g];
    columns = groups.columns()[g];
    k = groups.ks()[g];
    t2Limit = groups.t2Limits()[g];
    qLimit = groups.qLimits()[g];
  }

  /** The group number of key code {@code code} of this task's coder. */
  final int groupOf(int code) {
    if (code >= groupOfCode.length) {
      int from = groupOfCode.length;
      groupOfCode = java.util.Arrays.copyOf(groupOfCode, Math.max(code + 1, 2 * from));
      java.util.Arrays.fill(groupOfCode, from, groupOfCode.length, -2);
    }
    if (groupOfCode[code] == -2) {
      groupOfCode[code] = groups.group(coder.key(code));
    }
    return groupOfCode[code];
  }

  /** Whether rows of group {@code g} are scored (or flagged), rather than left out: an unknown group with skip. */
  final boolean kept(int g) {
    return g != GroupScoring.UNKNOWN || groups.unknown() == io.eigenmill.settings.Choices.UnknownGroup.FLAG;
  }

  /** Counts {@code rows} rows of an unknown group (key code {@code code}). */
  final void unknown(int code, int rows) {
    gathering.unknown(coder.key(code), rows);
  }

  @Override
  public InternalRow next() {
    if (!hasNext()) {
      throw new NoSuchElementException();
    }
    int i = pos++;
    view.at(source(i), i);
    return view;
  }

  /** Score column c of block row i: pc_1..pc_k, t2, q; or the reconstruction of feature c. */
  double statistic(int c, int i) {
    if (spec.reconstruct()) {
      return scorer.reconstructed(x, m, i, c, rows());
    }
    if (c < outK) {
      return c < k ? scores[c * rows() + i] : Double.NaN;
    }
    return c == outK ? t2[i] : q[i];
  }

  /** Flag column c (outK + 2: flag_t2, outK + 3: flag_q) of block row i; both true for an unknown group's row. */
  boolean flag(int c, int i) {
    if (group == GroupScoring.UNKNOWN) {
      return true;
    }
    return c == outK + 2 ? t2[i] > t2Limit : qLimit > 0 && q[i] > qLimit;
  }

  // ---- the readers

  /** Reads Parquet's columnar batches: features copied column by column, pass-through values left in the batch. */
  static final class FromBatches extends ScoreBlocks {
    private final Iterator<ColumnarBatch> batches;
    private final int[] featureOrdinals;
    private final int[] kinds;
    private final ColumnVector[] vectors;
    private ColumnarBatch batch;
    private int batchRows;
    private int start;
    /** With groups: the batch's rows ordered by group (stable), their groups, and the key vectors. */
    private int[] order = new int[0];
    private int[] codes = new int[0];
    /** The key codes of the ordered rows ({@code ordered[i]} is the code of row {@code order[i]}). */
    private int[] ordered = new int[0];
    private final ColumnVector[] keyVectors;

    FromBatches(Iterator<ColumnarBatch> batches, ScoringPass.Spec spec, ScoringPass.Layout layout,
        ScoringPass.Counters counters, int[] passOrdinals, int[] featureOrdinals, int[] kinds) {
      super(spec, layout, counters, passOrdinals);
      this.batches = batches;
      this.featureOrdinals = featureOrdinals;
      this.kinds = kinds;
      this.vectors = new ColumnVector[featureOrdinals.length];
      this.keyVectors = groups == null ? null : new ColumnVector[groups.keys().size()];
    }

    /**
     * With groups: orders the batch's rows by group (a stable counting sort of their key codes), leaving out the
     * rows of unknown groups under skip (counted); a block then takes the next rows of one group only.
     */
    private void orderByGroup() {
      for (int c = 0; c < keyVectors.length; c++) {
        keyVectors[c] = batch.column(passOrdinals[layout.groupColumns()[c]]);
      }
      if (codes.length < batchRows) {
        codes = new int[batchRows];
        order = new int[batchRows];
      }
      for (int r = 0; r < batchRows; r++) {
        codes[r] = coder.code(keyVectors, r);
      }
      int keys = coder.count();
      int[] sorted = new int[batchRows];
      int[] starts = io.eigenmill.engine.KeyedPasses.orderByCode(codes, batchRows, keys, sorted);
      int kept = 0;
      for (int c = 0; c < keys; c++) {
        int n = starts[c + 1] - starts[c];
        if (n == 0) {
          continue;
        }
        int g = groupOf(c);
        if (g == GroupScoring.UNKNOWN) {
          unknown(c, n);
        }
        if (!kept(g)) {
          continue;
        }
        System.arraycopy(sorted, starts[c], order, kept, n);
        kept += n;
      }
      if (ordered.length < kept) {
        ordered = new int[codes.length];
      }
      for (int i = 0; i < kept; i++) {
        ordered[i] = codes[order[i]];
      }
      batchRows = kept;
    }

    /** With groups: the next slice of one group's rows of the ordered batch. */
    private boolean fillGroup() {
      int g = groupOf(ordered[start]);
      int t = 1;
      while (t < m && start + t < batchRows && ordered[start + t] == ordered[start]) {
        t++;
      }
      useGroup(g);
      for (int i = 0; i < t; i++) {
        origins[i] = order[start + i];
      }
      for (int j = 0; j < vectors.length; j++) {
        PartitionPasses.gatherColumn(vectors[j], kinds[j], order, start, t, block, j);
      }
      commit(t, true);
      start += t;
      return rows() > 0;
    }

    /** The next slice of at most one block of the current batch (a block never spans two batches). */
    @Override
    boolean fill() {
      while (true) {
        if (batch != null && start < batchRows && groups != null) {
          if (fillGroup()) {
            return true;
          }
        } else if (batch != null && start < batchRows) {
          int t = Math.min(m, batchRows - start);
          for (int i = 0; i < t; i++) {
            origins[i] = start + i;
          }
          for (int j = 0; j < vectors.length; j++) {
            PartitionPasses.copyColumn(vectors[j], kinds[j], start, t, block, j);
          }
          commit(t, true);
          start += t;
          if (rows() > 0) {
            return true;
          }
        } else if (batches.hasNext()) {
          batch = batches.next();
          batchRows = batch.numRows();
          start = 0;
          for (int j = 0; j < vectors.length; j++) {
            vectors[j] = batch.column(featureOrdinals[j]);
          }
          if (groups != null) {
            orderByGroup();
          }
        } else {
          batch = null;
          return false;
        }
      }
    }

    /** The batch's row view, pointed at the block row's origin (one reused object). */
    @Override
    InternalRow source(int i) {
      return batch.getRow(origins[i]);
    }
  }

  /** Reads rows of the selection (pass-through columns, then the features cast to double); keeps copies of a block. */
  static final class FromRows extends ScoreBlocks {
    private final Iterator<InternalRow> rows;
    private final InternalRow[] held;

    FromRows(Iterator<InternalRow> rows, ScoringPass.Spec spec, ScoringPass.Layout layout,
        ScoringPass.Counters counters) {
      super(spec, layout, counters, identity(layout.passThrough()));
      this.rows = rows;
      this.held = new InternalRow[m];
    }

    private static int[] identity(int n) {
      int[] o = new int[n];
      for (int i = 0; i < n; i++) {
        o[i] = i;
      }
      return o;
    }

    /** With groups: a row of another group than the block's, read but kept for the next block. */
    private InternalRow pending;
    private int pendingGroup;

    /**
     * With groups, a block holds rows of one group: the first row of another group ends it and starts the next
     * (rows in group order make full blocks; rows in random order make blocks of one row, correct but slower).
     */
    @Override
    boolean fill() {
      int blockGroup = Integer.MIN_VALUE;
      while (rows() < m && (pending != null || rows.hasNext())) {
        InternalRow row;
        int g = 0;
        if (pending != null) {
          row = pending;
          g = pendingGroup;
          pending = null;
        } else {
          row = rows.next();
          if (groups != null) {
            int code = coder.code(row, p + d);
            g = groupOf(code);
            if (g == GroupScoring.UNKNOWN) {
              unknown(code, 1);
            }
            if (!kept(g)) {
              continue;
            }
          }
        }
        if (groups != null) {
          if (blockGroup == Integer.MIN_VALUE) {
            blockGroup = g;
            useGroup(g);
          } else if (g != blockGroup) {
            pending = row.copy();
            pendingGroup = g;
            break;
          }
        }
        int at = rows();
        for (int j = 0; j < d; j++) {
          int c = p + j;
          if (row.isNullAt(c)) {
            block.markMissing(0, j);
            continue;
          }
          double v = row.getDouble(c);
          x[j * m + at] = v;
          if (v - v != 0.0) {
            block.markMissing(0, j);
          }
        }
        if (commit(1, false) == 1) {
          // the scan may reuse its row object: keep a copy until the block's rows are handed out
          held[at] = row.copy();
        }
      }
      return rows() > 0;
    }

    @Override
    InternalRow source(int i) {
      return held[i];
    }
  }

  /** The executor function of the columnar path. */
  static final class ColumnarScoring implements FlatMapFunction<Iterator<ColumnarBatch>, InternalRow> {
    private static final long serialVersionUID = 1L;
    private final ScoringPass.Spec spec;
    private final ScoringPass.Layout layout;
    private final ScoringPass.Counters counters;
    private final int[] passOrdinals;
    private final int[] featureOrdinals;
    private final int[] kinds;

    ColumnarScoring(ScoringPass.Spec spec, ScoringPass.Layout layout, ScoringPass.Counters counters,
        int[] passOrdinals, int[] featureOrdinals, int[] kinds) {
      this.spec = spec;
      this.layout = layout;
      this.counters = counters;
      this.passOrdinals = passOrdinals;
      this.featureOrdinals = featureOrdinals;
      this.kinds = kinds;
    }

    @Override
    public Iterator<InternalRow> call(Iterator<ColumnarBatch> batches) {
      return new FromBatches(batches, spec, layout, counters, passOrdinals, featureOrdinals, kinds);
    }
  }

  /** The executor function of the row path. */
  static final class RowScoring implements FlatMapFunction<Iterator<InternalRow>, InternalRow> {
    private static final long serialVersionUID = 1L;
    private final ScoringPass.Spec spec;
    private final ScoringPass.Layout layout;
    private final ScoringPass.Counters counters;

    RowScoring(ScoringPass.Spec spec, ScoringPass.Layout layout, ScoringPass.Counters counters) {
      this.spec = spec;
      this.layout = layout;
      this.counters = counters;
    }

    @Override
    public Iterator<InternalRow> call(Iterator<InternalRow> rows) {
      return new FromRows(rows, spec, layout, counters);
    }
  }
}
