package io.eigenmill.kmeans;

import io.eigenmill.kmeans.ParallelKMeans.Run;
import io.eigenmill.kmeans.ParallelKMeans.TooFewDistinctPoints;
import io.eigenmill.kmeans.math.KMeansSeeding;
import io.eigenmill.kmeans.math.PointList;
import io.eigenmill.kmeans.math.SampleRound;
import io.eigenmill.math.SeedStream;
import java.util.ArrayList;
import java.util.List;

/**
 * The k-means|| initialisation of {@link ParallelKMeans} (its class comment states the method and its sources):
 * each run's first centre from the summary, {@link ParallelKMeans#ROUNDS} oversampling rounds (more while a run has
 * fewer than k distinct candidates), the candidates' weights, and weighted k-means++ with weighted Lloyd iterations
 * on the driver. Every search goes through {@link ParallelKMeans#pass}: over the initialisation sample on the
 * driver, or a pass over the cached points (counted there) when the sample is null. Cost per round: s d sum_r |C_r|
 * flops over a sample of s rows.
 */
final class KMeansParallelInit {
  private final ParallelKMeans kmeans;
  private final int d;
  private final double[] shift;
  private final long seed;

  /** @param shift the data mean: candidates are kept in coordinates shifted by it */
  KMeansParallelInit(ParallelKMeans kmeans, int d, double[] shift, long seed) {
    this.kmeans = kmeans;
    this.d = d;
    this.shift = shift;
    this.seed = seed;
  }

  /** k-means|| and the weighted reduction: over {@code sample} on the driver, or over the cache when it is null. */
  double[][] initialise(List<Run> runs, PointSummary summary, List<PointBlock> sample) {
    PointList[] candidates = initialCandidates(runs, summary);
    oversample(runs, candidates, sample);
    return reduceCandidates(runs, candidates, sample);
  }

  private PointList[] initialCandidates(List<Run> runs, PointSummary summary) {
    PointList[] c = new PointList[runs.size()];
    for (int r = 0; r < c.length; r++) {
      double[] first = summary.firstCentre(r);
      for (int l = 0; l < d; l++) {
        first[l] -= shift[l];
      }
      c[r] = new PointList(d);
      c[r].add(summary.firstIdentity(r), first, 0, 1);
    }
    return c;
  }

  private void oversample(List<Run> runs, PointList[] candidates, List<PointBlock> sample) {
    List<Integer> sampling = new ArrayList<>();
    for (int r = 0; r < runs.size(); r++) {
      sampling.add(r);
    }
    for (int round = 1; !sampling.isEmpty(); round++) {
      int q = sampling.size();
      long[] streams = new long[q];
      int[] capacities = new int[q];
      for (int a = 0; a < q; a++) {
        Run run = runs.get(sampling.get(a));
        streams[a] = SeedStream.stream(seed, SeedStream.OVERSAMPLE, run.k(), run.restart(), round);
        capacities[a] = ParallelKMeans.KEPT_PER_OVERSAMPLE * 2 * run.k() + ParallelKMeans.KEPT_EXTRA;
      }
      CentroidTable table = table(sampling, candidates);
      SampleRound sampled = kmeans.pass("cluster/init-round-" + round, table,
          new ClusterPasses.Round(streams, capacities), sample);
      PointList[] got = new PointList[q];
      double[] thresholds = new double[q];
      List<Integer> overflowed = new ArrayList<>();
      for (int a = 0; a < q; a++) {
        int r = sampling.get(a);
        double phi = sampled.cost(a);
        if (!(phi > 0)) {
          // phi = 0: every row coincides with a candidate, so the candidates are all the distinct points
          if (candidates[r].size() < runs.get(r).k()) {
            throw new TooFewDistinctPoints(runs.get(r).k(), candidates[r].size());
          }
          thresholds[a] = Double.POSITIVE_INFINITY;
          continue;
        }
        thresholds[a] = phi / (2.0 * runs.get(r).k());
        got[a] = sampled.selected(a, thresholds[a]);
        if (got[a].size() == 0 && candidates[r].size() < runs.get(r).k()) {
          // equal rows share their identity and so their unit number: on heavily duplicated rows a round can
          // sample nothing; a run short of k candidates then takes its row of largest key
          got[a] = sampled.largest(a);
        }
        if (sampled.overflowed(a, thresholds[a])) {
          overflowed.add(a);
        }
      }
      if (!overflowed.isEmpty()) {
        PointList[] all = kmeans.pass("cluster/init-round-" + round + "-all", table,
            new ClusterPasses.Threshold(streams, thresholds), sample);
        for (int a : overflowed) {
          got[a] = all[a];
        }
      }
      sampling = stillSampling(runs, candidates, sampling, got, round);
    }
  }

  /** Adds a round's samples; a run goes on while round < ParallelKMeans.ROUNDS, or while it lacks k distinct candidates. */
  private List<Integer> stillSampling(List<Run> runs, PointList[] candidates, List<Integer> sampling,
      PointList[] got, int round) {
    List<Integer> next = new ArrayList<>();
    for (int a = 0; a < sampling.size(); a++) {
      int r = sampling.get(a);
      if (got[a] == null) {
        continue; // phi = 0: nothing left to sample
      }
      candidates[r] = candidates[r].merge(got[a]).canonical();
      boolean enough = candidates[r].size() >= runs.get(r).k();
      if (round >= ParallelKMeans.ROUNDS + ParallelKMeans.MAX_EXTRA_ROUNDS && !enough) {
        throw new IllegalStateException("k-means|| found only " + candidates[r].size() + " distinct candidates"
            + " for k = " + runs.get(r).k() + " after " + round + " rounds");
      }
      if (round < ParallelKMeans.ROUNDS || !enough) {
        next.add(r);
      }
    }
    return next;
  }

  private double[][] reduceCandidates(List<Run> runs, PointList[] candidates, List<PointBlock> sample) {
    List<Integer> all = new ArrayList<>();
    for (int r = 0; r < runs.size(); r++) {
      all.add(r);
    }
    CentroidTable table = table(all, candidates);
    long[] counts = kmeans.pass("cluster/init-weights", table, new ClusterPasses.Weights(), sample);
    double[][] starts = new double[runs.size()][];
    for (int r = 0; r < runs.size(); r++) {
      Run run = runs.get(r);
      int m = candidates[r].size();
      double[] w = new double[m];
      for (int i = 0; i < m; i++) {
        // each candidate is itself a row, so it stands for at least one
        w[i] = Math.max(1, counts[table.offsets[r] + i]);
      }
      double[] pts = candidates[r].points();
      long stream = SeedStream.stream(seed, SeedStream.PLUS_PLUS, run.k(), run.restart(), 0);
      starts[r] = KMeansSeeding.plusPlus(pts, w, m, d, run.k(), stream);
      KMeansSeeding.lloyd(pts, w, m, d, starts[r], run.k(), ParallelKMeans.LOCAL_ITERATIONS);
    }
    return starts;
  }

  private CentroidTable table(List<Integer> runs, PointList[] candidates) {
    List<double[]> perRun = new ArrayList<>();
    for (int r : runs) {
      perRun.add(candidates[r].points());
    }
    return CentroidTable.of(d, shift, perRun);
  }
}
