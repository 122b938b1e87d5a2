package io.eigenmill.spark;

import io.eigenmill.math.Moments;
import io.eigenmill.math.RankedPoints;
import java.io.Serializable;

/**
 * What the first clustering pass learns about the points, merged over partitions: their moments (count, mean,
 * co-moments; the full Gram only when asked), the rows skipped for non-finite values, the seeded silhouette sample
 * (bottom-s by a unit random number of each point's identity) and, for each k-means run, its first k-means|| centre
 * (the point of smallest unit number in that run's stream). All of it independent of the partitioning.
 */
public final class PointSummary implements Serializable {
  private static final long serialVersionUID = 1L;

  final Moments moments;
  long skipped;
  final RankedPoints sample;
  final RankedPoints[] firsts;

  PointSummary(int d, boolean gram, int sampleSize, int runs) {
    this.moments = Moments.empty(d, gram);
    this.sample = new RankedPoints(Math.max(1, sampleSize), d);
    this.firsts = new RankedPoints[runs];
    for (int r = 0; r < runs; r++) {
      firsts[r] = new RankedPoints(1, d);
    }
  }

  PointSummary merge(PointSummary other) {
    moments.merge(other.moments);
    skipped += other.skipped;
    sample.merge(other.sample);
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

  /** The first centre of run r (point-major, d values) and its identity. */
  public double[] firstCentre(int r) {
    return firsts[r].points();
  }

  public long firstIdentity(int r) {
    return firsts[r].identities()[0];
  }
}
