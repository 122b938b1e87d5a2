package io.eigenmill.pca;

import io.eigenmill.engine.BlockAggregator;
import io.eigenmill.math.ColumnStats;
import io.eigenmill.math.Moments;
import io.eigenmill.pca.math.RFactor;
import io.eigenmill.pca.math.SketchProduct;
import org.apache.spark.broadcast.Broadcast;

/** The block aggregators of the PCA passes, each a thin adapter over a pure-math summary. */
public final class Aggregators {
  private Aggregators() {}

  /** Count, mean and co-moments (full Gram, or only variances when {@code gram} is false). */
  public static final class MomentsPass implements BlockAggregator<Moments> {
    private static final long serialVersionUID = 1L;
    private final int d;
    private final boolean gram;

    public MomentsPass(int d, boolean gram) {
      this.d = d;
      this.gram = gram;
    }

    @Override public Moments zero() {
      return Moments.empty(d, gram);
    }

    @Override public void add(Moments partial, double[] block, int rows, int ld) {
      partial.addBlock(block, rows, ld);
    }

    /** The previous block's mean: the copy then does the centring's subtraction (see {@link Moments#nextOrigin}). */
    @Override public double[] origin(Moments partial) {
      return partial.nextOrigin();
    }

    @Override public void addShifted(Moments partial, double[] block, int rows, int ld, double[] origin) {
      partial.addShiftedBlock(block, rows, ld, origin);
    }

    @Override public Moments merge(Moments left, Moments right) {
      return left.merge(right);
    }
  }

  /** Per-column statistics skipping missing (NaN) cells: the first pass of mean imputation. */
  public static final class ColumnStatsPass implements BlockAggregator<ColumnStats> {
    private static final long serialVersionUID = 1L;
    private final int d;

    public ColumnStatsPass(int d) {
      this.d = d;
    }

    @Override public ColumnStats zero() {
      return ColumnStats.empty(d);
    }

    @Override public void add(ColumnStats partial, double[] block, int rows, int ld) {
      partial.addBlock(block, rows, ld);
    }

    @Override public ColumnStats merge(ColumnStats left, ColumnStats right) {
      return left.merge(right);
    }
  }

  /** The R factor of the prepared rows (TSQR). */
  public static final class RFactorPass implements BlockAggregator<RFactor> {
    private static final long serialVersionUID = 1L;
    private final int d;

    public RFactorPass(int d) {
      this.d = d;
    }

    @Override public RFactor zero() {
      return RFactor.empty(d);
    }

    @Override public void add(RFactor partial, double[] block, int rows, int ld) {
      partial.addBlock(block, rows, ld);
    }

    @Override public RFactor merge(RFactor left, RFactor right) {
      return left.merge(right);
    }
  }

  /** Z = A^T A Q for a broadcast basis Q (randomized method). */
  public static final class SketchPass implements BlockAggregator<SketchProduct> {
    private static final long serialVersionUID = 1L;
    private final int d;
    private final int l;
    private final Broadcast<double[]> basis;

    public SketchPass(int d, int l, Broadcast<double[]> basis) {
      this.d = d;
      this.l = l;
      this.basis = basis;
    }

    @Override public SketchProduct zero() {
      return SketchProduct.empty(d, l);
    }

    @Override public void add(SketchProduct partial, double[] block, int rows, int ld) {
      partial.addBlock(block, rows, ld, basis.value());
    }

    @Override public SketchProduct merge(SketchProduct left, SketchProduct right) {
      return left.merge(right);
    }
  }
}
