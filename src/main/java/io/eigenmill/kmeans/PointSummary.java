package io.eigenmill.kmeans;

import io.eigenmill.kmeans.math.RankedPoints;
import io.eigenmill.math.Moments;
import java.io.Serializable;

/**
 * What the first clustering pass learns about the points, merged over partitions: their moments (count, mean,
 * co-moments; the full Gram only when asked), the rows skipped for non-finite values, the seeded silhouette sample
 * (bottom-s by a unit random number of each point's identity), the seeded sample on which k-means|| starts (the
 * same rule in its own stream; absent when the initialisation reads all rows) and, for each k-means run, its first
 * k-means|| centre (the point of smallest unit number in that run's stream). All of it independent of the
 * partitioning.
 */
public final class PointSummary implements Serializable {
  private static final long serialVersionUID = 1L;

  final Moments moments;
  long skipped;
  final RankedPoints sample;
  /** Null when k-means|| runs over all rows. */
  final RankedPoints initSample;
  final RankedPoints[] firsts;

  /** @param initSize rows of the initialisation sample; 0 for none */
  PointSummary(int d, boolean gram, int sampleSize, int initSize, int runs) {
    this.moments = Moments.empty(d, gram);
    this.sample = new RankedPoints(Math.max(1, sampleSize), d);
    this.initSample = initSize > 0 ? new RankedPoints(initSize, d) : null;
    this.firsts = new RankedPoints[runs];
    for (int r = 0; r < runs; r++) {
      firsts[r] = new RankedPoints(1, d);
    }
  }

  PointSummary merge(PointSummary other) {
    moments.merge(other.moments);
    skipped += other.skipped;
    sample.merge(other.sample);
    if (initSample != null) {
      initSample.merge(other.initSample);
    }
    for (int r = 0; r < firsts.length; r++) {
      firsts[r].merge(other.firsts[r]);
    }
    return this;
  }

  public Moments moments() {
    return moments;
  }

  public long skipped() {
    return skipped;
  }

  /** The silhouette sample, point-major, in the order of its unit numbers. */
  public double[] samplePoints() {
    return sample.points();
  }

  public int sampleSize() {
    return sample.size();
  }

  /** Rows in the initialisation sample; 0 when there is none. */
  public int initSampleSize() {
    return initSample == null ? 0 : initSample.size();
  }

  /**
   * The initialisation sample as blocks of at most {@code blockRows} rows, in the order of its unit numbers, or null
   * when there is none.
   */
  java.util.List<PointBlock> initBlocks(int blockRows) {
    if (initSample == null) {
      return null;
    }
    int d = initSample.dimension();
    double[] points = initSample.points();
    long[] ids = initSample.identities();
    java.util.List<PointBlock> blocks = new java.util.ArrayList<>();
    for (int from = 0; from < ids.length; from += blockRows) {
      int rows = Math.min(blockRows, ids.length - from);
      double[] values = new double[rows * d];
      for (int i = 0; i < rows; i++) {
        for (int l = 0; l < d; l++) {
          values[i + l * rows] = points[(from + i) * d + l];
        }
      }
      blocks.add(new PointBlock(rows, d, values, java.util.Arrays.copyOfRange(ids, from, from + rows), 0));
    }
    return blocks;
  }

  /** The first centre of run r (point-major, d values) and its identity. */
  public double[] firstCentre(int r) {
    return firsts[r].points();
  }

  public long firstIdentity(int r) {
    return firsts[r].identities()[0];
  }
}
