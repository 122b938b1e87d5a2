package io.eigenmill.kmeans;

import io.eigenmill.engine.OrderedMerge;
import io.eigenmill.engine.Progress;
import io.eigenmill.kmeans.math.LloydStats;
import io.eigenmill.kmeans.math.NearestKeys;
import io.eigenmill.kmeans.math.NearestSearch;
import io.eigenmill.kmeans.math.PointList;
import io.eigenmill.kmeans.math.RankedPoints;
import io.eigenmill.kmeans.math.SampleRound;
import io.eigenmill.math.SeedStream;
import java.io.Serializable;
import java.util.Iterator;
import java.util.List;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.api.java.JavaSparkContext;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.api.java.function.Function2;
import org.apache.spark.broadcast.Broadcast;
import org.apache.spark.sql.SparkSession;

/**
 * The passes of clustering over the cached {@link PointBlock}s. Each pass is one Spark job: every partition folds
 * its blocks into one buffer, buffers merge in partition order ({@link OrderedMerge}, repeatable bit for bit).
 * Executor code is explicit static classes; centroids travel in a broadcast destroyed after the pass. Rows are
 * shifted by the data mean, in the cached blocks themselves by the first search pass ({@link PointBlock#toFrame}),
 * and handed to {@link NearestSearch} (BLAS level 3) as they are; no object is made per row.
 */
final class ClusterPasses {
  /** Rows handed to one search call at most (fewer when there are many centroids: see NearestSearch). */
  static final int CHUNK_ROWS = 1024;

  private ClusterPasses() {}

  /** What a search pass does with the nearest centroids of a chunk of rows. */
  interface Consumer<B extends Serializable> extends Serializable {
    B zero(CentroidTable table);

    /** Row i of the chunk is {@code x[i + l * ldx]} (shifted), its identity {@code ids[idOff + i]}. */
    void add(B buffer, NearestSearch search, double[] x, int rows, int ldx, long[] ids, int idOff);

    B merge(B left, B right);
  }

  /** The first pass: moments, skipped rows, silhouette sample and each run's first centre. */
  static PointSummary summarize(SparkSession spark, JavaRDD<PointBlock> blocks, int d, boolean gram,
      int sampleSize, long sampleStream, int initSize, long initStream, long[] firstStreams) {
    try (Progress progress = Progress.start(spark, "cluster/summary", null)) {
      JavaRDD<PointSummary> partials = blocks.mapPartitions(
          new SummaryPass(d, gram, sampleSize, sampleStream, initSize, initStream, firstStreams));
      if (partials.getNumPartitions() == 0) {
        return new PointSummary(d, gram, sampleSize, initSize, firstStreams.length);
      }
      PointSummary s = OrderedMerge.merge(partials, new MergeSummaries());
      progress.done(s.moments.count() + s.skipped);
      return s;
    }
  }

  /** One search pass of {@code consumer} against {@code table}. */
  static <B extends Serializable> B search(SparkSession spark, String stage, JavaRDD<PointBlock> blocks,
      CentroidTable table, Consumer<B> consumer) {
    Broadcast<CentroidTable> broadcast = JavaSparkContext.fromSparkContext(spark.sparkContext()).broadcast(table);
    try (Progress progress = Progress.start(spark, stage, null)) {
      JavaRDD<B> partials = blocks.mapPartitions(new SearchPass<>(broadcast, consumer));
      if (partials.getNumPartitions() == 0) {
        return consumer.zero(table);
      }
      return OrderedMerge.merge(partials, new MergeBuffers<>(consumer));
    } finally {
      broadcast.destroy();
    }
  }

  static final class SummaryPass implements FlatMapFunction<Iterator<PointBlock>, PointSummary> {
    private static final long serialVersionUID = 1L;
    private final int d;
    private final boolean gram;
    private final int sampleSize;
    private final long sampleStream;
    private final int initSize;
    private final long initStream;
    private final long[] firstStreams;

    SummaryPass(int d, boolean gram, int sampleSize, long sampleStream, int initSize, long initStream,
        long[] firstStreams) {
      this.d = d;
      this.gram = gram;
      this.sampleSize = sampleSize;
      this.sampleStream = sampleStream;
      this.initSize = initSize;
      this.initStream = initStream;
      this.firstStreams = firstStreams;
    }

    @Override
    public Iterator<PointSummary> call(Iterator<PointBlock> blocks) {
      PointSummary s = new PointSummary(d, gram, sampleSize, initSize, firstStreams.length);
      double[] scratch = new double[0];
      while (blocks.hasNext()) {
        PointBlock b = blocks.next();
        b.toFrame(null); // the values as read (the summary is the first pass: this finds them so)
        s.skipped += b.skipped;
        if (b.rows == 0) {
          continue;
        }
        if (scratch.length < b.values.length) {
          scratch = new double[b.values.length];
        }
        System.arraycopy(b.values, 0, scratch, 0, b.values.length); // Moments centres its block in place
        s.moments.addBlock(scratch, b.rows, b.rows);
        for (int i = 0; i < b.rows; i++) {
          long id = b.ids[i];
          // most rows are refused: compare with the refusal rank here and call offer() rarely (see RankedPoints)
          offer(s.sample, SeedStream.unit(sampleStream, id), id, b, i);
          if (s.initSample != null) {
            offer(s.initSample, SeedStream.unit(initStream, id), id, b, i);
          }
          for (int r = 0; r < firstStreams.length; r++) {
            offer(s.firsts[r], SeedStream.unit(firstStreams[r], id), id, b, i);
          }
        }
      }
      return List.of(s).iterator();
    }
  }

  private static void offer(RankedPoints to, double rank, long id, PointBlock b, int i) {
    if (rank <= to.refusalRank()) {
      to.offer(rank, id, b.values, i, b.rows);
    }
  }

  static final class MergeSummaries implements Function2<PointSummary, PointSummary, PointSummary> {
    private static final long serialVersionUID = 1L;

    @Override
    public PointSummary call(PointSummary left, PointSummary right) {
      return left.merge(right);
    }
  }

  static final class SearchPass<B extends Serializable> implements FlatMapFunction<Iterator<PointBlock>, B> {
    private static final long serialVersionUID = 1L;
    private final Broadcast<CentroidTable> table;
    private final Consumer<B> consumer;

    SearchPass(Broadcast<CentroidTable> table, Consumer<B> consumer) {
      this.table = table;
      this.consumer = consumer;
    }

    @Override
    public Iterator<B> call(Iterator<PointBlock> blocks) {
      return List.of(fold(table.value(), consumer, blocks, NearestKeys.best())).iterator();
    }
  }

  /**
   * One search of {@code consumer} against {@code t} over {@code blocks} with the nearest-centroid {@code kernel}:
   * the body of a pass's task (the best kernel), and the whole of a pass over points held on the driver (the
   * k-means|| initialisation sample: the scalar kernel, see ParallelKMeans#pass).
   */
  static <B extends Serializable> B fold(CentroidTable t, Consumer<B> consumer, Iterator<PointBlock> blocks,
      NearestKeys kernel) {
    B buffer = consumer.zero(t);
    NearestSearch search = null;
    double[] x = null;
    while (blocks.hasNext()) {
      PointBlock b = blocks.next();
      if (b.rows == 0) {
        continue;
      }
      if (search == null) {
        search = t.search(CHUNK_ROWS, false, kernel);
      }
      int chunk = search.chunk();
      double[] norms = b.toFrame(t.shift); // in place, once per block: see PointBlock
      if (b.rows <= chunk) {
        // the usual case (blocks of CHUNK_ROWS, at most PRODUCT_BUDGET / CHUNK_ROWS centroids): no copy
        search.search(b.values, 0, b.rows, b.rows, norms);
        consumer.add(buffer, search, b.values, b.rows, b.rows, b.ids, 0);
        continue;
      }
      // many centroids: chunks of the block through the scratch (the BLAS binding checks whole columns, which a
      // chunk inside a block does not have)
      if (x == null) {
        x = new double[chunk * t.d];
      }
      for (int from = 0; from < b.rows; from += chunk) {
        int m = Math.min(chunk, b.rows - from);
        for (int l = 0; l < t.d; l++) {
          System.arraycopy(b.values, from + l * b.rows, x, l * chunk, m);
        }
        search.search(x, 0, m, chunk);
        consumer.add(buffer, search, x, m, chunk, b.ids, from);
      }
    }
    return buffer;
  }

  static final class MergeBuffers<B extends Serializable> implements Function2<B, B, B> {
    private static final long serialVersionUID = 1L;
    private final Consumer<B> consumer;

    MergeBuffers(Consumer<B> consumer) {
      this.consumer = consumer;
    }

    @Override
    public B call(B left, B right) {
      return consumer.merge(left, right);
    }
  }

  /** One k-means|| round in one pass: phi and the rows of largest key, per run ({@link SampleRound}). */
  static final class Round implements Consumer<SampleRound> {
    private static final long serialVersionUID = 1L;
    private final long[] streams;
    private final int[] capacities;

    Round(long[] streams, int[] capacities) {
      this.streams = streams;
      this.capacities = capacities;
    }

    @Override public SampleRound zero(CentroidTable table) {
      return new SampleRound(streams, capacities, table.d);
    }

    @Override public void add(SampleRound round, NearestSearch search, double[] x, int rows, int ldx, long[] ids,
        int idOff) {
      round.add(search, x, rows, ldx, ids, idOff);
    }

    @Override public SampleRound merge(SampleRound left, SampleRound right) {
      return left.merge(right);
    }
  }

  /**
   * The fallback of a round whose kept rows overflowed: every row whose key d^2 / u exceeds the run's threshold
   * phi / l, now known ({@link SampleRound#key}, the same arithmetic as the one-pass round).
   */
  static final class Threshold implements Consumer<PointList[]> {
    private static final long serialVersionUID = 1L;
    private final long[] streams;
    private final double[] thresholds;

    Threshold(long[] streams, double[] thresholds) {
      this.streams = streams;
      this.thresholds = thresholds;
    }

    @Override public PointList[] zero(CentroidTable table) {
      PointList[] lists = new PointList[table.runs()];
      for (int r = 0; r < lists.length; r++) {
        lists[r] = new PointList(table.d);
      }
      return lists;
    }

    @Override public void add(PointList[] lists, NearestSearch search, double[] x, int rows, int ldx, long[] ids,
        int idOff) {
      for (int r = 0; r < lists.length; r++) {
        for (int i = 0; i < rows; i++) {
          double d2 = search.distance2(r, i);
          if (d2 > 0 && SampleRound.key(d2, SeedStream.unit(streams[r], ids[idOff + i])) > thresholds[r]) {
            lists[r].add(ids[idOff + i], x, i, ldx);
          }
        }
      }
    }

    @Override public PointList[] merge(PointList[] left, PointList[] right) {
      for (int r = 0; r < left.length; r++) {
        left[r].merge(right[r]);
      }
      return left;
    }
  }

  /** Rows nearest to each centroid (global index): the weights of the k-means|| candidates. */
  static final class Weights implements Consumer<long[]> {
    private static final long serialVersionUID = 1L;

    @Override public long[] zero(CentroidTable table) {
      return new long[table.total()];
    }

    @Override public void add(long[] counts, NearestSearch search, double[] x, int rows, int ldx, long[] ids,
        int idOff) {
      for (int r = 0; r < search.runs(); r++) {
        for (int i = 0; i < rows; i++) {
          counts[search.nearest(r, i)]++;
        }
      }
    }

    @Override public long[] merge(long[] left, long[] right) {
      for (int j = 0; j < left.length; j++) {
        left[j] += right[j];
      }
      return left;
    }
  }

  /** One Lloyd iteration of every run in the table. */
  static final class Lloyd implements Consumer<LloydStats> {
    private static final long serialVersionUID = 1L;

    @Override public LloydStats zero(CentroidTable table) {
      return LloydStats.empty(table.d, table.offsets);
    }

    @Override public void add(LloydStats stats, NearestSearch search, double[] x, int rows, int ldx, long[] ids,
        int idOff) {
      stats.add(search, x, 0, rows, ldx, ids, idOff);
    }

    @Override public LloydStats merge(LloydStats left, LloydStats right) {
      return left.merge(right);
    }
  }
}
