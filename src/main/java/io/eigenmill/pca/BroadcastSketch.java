package io.eigenmill.pca;

import io.eigenmill.math.BlockSummary;
import io.eigenmill.pca.math.SketchProduct;
import org.apache.spark.broadcast.Broadcast;

/**
 * Empty sketches Z = A^T A Q (randomized method) for a basis Q that reaches the executors as a broadcast: each task
 * reads the broadcast once, when it makes its partition's summary, and every block of the partition is taken against
 * that array. The pure-math {@link SketchProduct} never sees Spark.
 */
final class BroadcastSketch implements BlockSummary.Factory<SketchProduct> {
  private static final long serialVersionUID = 1L;
  private final int d;
  private final int l;
  private final Broadcast<double[]> basis;

  /** @param basis Q, column-major d x l */
  BroadcastSketch(int d, int l, Broadcast<double[]> basis) {
    this.d = d;
    this.l = l;
    this.basis = basis;
  }

  @Override public SketchProduct empty() {
    return SketchProduct.empty(d, l, basis.value());
  }
}
