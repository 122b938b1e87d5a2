package io.eigenmill.kmeans.math;

import io.eigenmill.math.SeedStream;
import java.io.Serializable;

/**
 * The mergeable buffer of one k-means|| round (Bahmani et al. 2012, Algorithm 2, steps 4-5) for several runs, done
 * in a single pass. A round must add each row x to the candidates C with probability min(1, l d^2(x, C) / phi),
 * where phi = sum d^2(x, C) is only known at the end of the pass. With u(x) the row's unit number, that is
 * u(x) < l d^2(x, C) / phi, i.e. the row's key d^2(x, C) / u(x) exceeds phi / l. So the pass sums phi and keeps,
 * per run, the rows of largest key ({@link RankedPoints} on -key, ties by identity); afterwards the driver takes the
 * kept rows whose key exceeds phi / l. Their expected number is at most l; when every kept row qualifies and the
 * selection is full, more rows may qualify ({@link #overflowed}) and the caller runs a pass with the now-known
 * threshold instead. Rows at distance 0 (already candidates) are never sampled.
 */
public final class SampleRound implements Serializable {
  private static final long serialVersionUID = 1L;

  private final long[] streams;
  private final double[] cost;
  private final RankedPoints[] top;

  /**
   * @param streams each run's stream for this round ({@link SeedStream#stream} with {@link SeedStream#OVERSAMPLE})
   * @param capacities rows of largest key kept per run
   */
  public SampleRound(long[] streams, int[] capacities, int d) {
    this.streams = streams.clone();
    this.cost = new double[streams.length];
    this.top = new RankedPoints[streams.length];
    for (int r = 0; r < top.length; r++) {
      top[r] = new RankedPoints(capacities[r], d);
    }
  }

  /** The key d^2 / u of a row at squared distance d2 with unit number u: +infinity when u = 0. */
  public static double key(double d2, double u) {
    return u == 0 ? Double.POSITIVE_INFINITY : d2 / u;
  }

  /** Adds the rows just searched (row i at {@code x[i + l * ldx]}, identity {@code ids[idOff + i]}). */
  public void add(NearestSearch search, double[] x, int rows, int ldx, long[] ids, int idOff) {
    for (int r = 0; r < top.length; r++) {
      RankedPoints kept = top[r];
      double s = 0;
      for (int i = 0; i < rows; i++) {
        double d2 = search.distance2(r, i);
        s += d2;
        if (d2 > 0) {
          long id = ids[idOff + i];
          double rank = -key(d2, SeedStream.unit(streams[r], id));
          if (rank <= kept.refusalRank()) { // most rows are refused: offer() only below the refusal rank
            kept.offer(rank, id, x, i, ldx);
          }
        }
      }
      cost[r] += s;
    }
  }

  public SampleRound merge(SampleRound other) {
    for (int r = 0; r < top.length; r++) {
      cost[r] += other.cost[r];
      top[r].merge(other.top[r]);
    }
    return this;
  }

  /** phi of run r: the sum over rows of the squared distance to the nearest candidate. */
  public double cost(int r) {
    return cost[r];
  }

  /** The kept rows of run r whose key exceeds {@code threshold} (= phi / l). */
  public PointList selected(int r, double threshold) {
    double[] ranks = top[r].ranks();
    long[] ids = top[r].identities();
    double[] pts = top[r].points();
    int d = top[r].dimension();
    PointList out = new PointList(d);
    for (int i = 0; i < ranks.length && -ranks[i] > threshold; i++) {
      out.add(ids[i], pts, i * d, 1);
    }
    return out;
  }

  /** The kept row of run r with the largest key (a list of one row), or an empty list when no row was kept. */
  public PointList largest(int r) {
    PointList out = new PointList(top[r].dimension());
    if (top[r].size() > 0) {
      out.add(top[r].identities()[0], top[r].points(), 0, 1);
    }
    return out;
  }

  /** True when run r's selection is full and all of it qualifies: rows beyond it may qualify too. */
  public boolean overflowed(int r, double threshold) {
    RankedPoints kept = top[r];
    if (kept.size() < kept.capacity()) {
      return false;
    }
    double[] ranks = kept.ranks();
    return -ranks[ranks.length - 1] > threshold;
  }
}
