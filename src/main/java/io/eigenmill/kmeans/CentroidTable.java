package io.eigenmill.kmeans;

import io.eigenmill.kmeans.math.NearestKeys;
import io.eigenmill.kmeans.math.NearestSearch;
import java.io.Serializable;
import java.util.List;

/**
 * The centroids of several k-means runs, broadcast to a pass: one column-major {@code d x K} matrix (run r owns
 * columns {@code offsets[r] .. offsets[r+1]-1}) in coordinates shifted by {@code shift} (the data mean), which the
 * pass subtracts from each row before the search.
 */
final class CentroidTable implements Serializable {
  private static final long serialVersionUID = 1L;

  final int d;
  final double[] shift;
  final double[] centroids;
  final int[] offsets;

  private CentroidTable(int d, double[] shift, double[] centroids, int[] offsets) {
    this.d = d;
    this.shift = shift;
    this.centroids = centroids;
    this.offsets = offsets;
  }

  /** @param perRun each run's centroids, point-major {@code k_r x d}, already shifted */
  static CentroidTable of(int d, double[] shift, List<double[]> perRun) {
    int[] offsets = new int[perRun.size() + 1];
    for (int r = 0; r < perRun.size(); r++) {
      offsets[r + 1] = offsets[r] + perRun.get(r).length / d;
    }
    double[] all = new double[offsets[perRun.size()] * d];
    for (int r = 0; r < perRun.size(); r++) {
      System.arraycopy(perRun.get(r), 0, all, offsets[r] * d, perRun.get(r).length);
    }
    return new CentroidTable(d, shift.clone(), all, offsets);
  }

  int runs() {
    return offsets.length - 1;
  }

  int total() {
    return offsets[offsets.length - 1];
  }

  NearestSearch search(int maxRows, boolean second, NearestKeys kernel) {
    return new NearestSearch(d, centroids, offsets, NearestSearch.chunkRows(total(), maxRows), second, kernel);
  }
}
