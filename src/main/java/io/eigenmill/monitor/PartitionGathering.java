package io.eigenmill.monitor;

import io.eigenmill.engine.KeyHash;
import io.eigenmill.math.SeedStream;
import io.eigenmill.monitor.math.DriftMoments;
import io.eigenmill.monitor.math.HashSample;
import io.eigenmill.monitor.math.Scorer;
import io.eigenmill.monitor.math.TimeBuckets;
import java.time.Instant;
import java.time.LocalDate;
import java.time.LocalDateTime;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.apache.spark.sql.catalyst.CatalystTypeConverters;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import scala.Function1;

/**
 * What one partition of a scoring pass gathers from its scored blocks ({@link ScoreBlocks}): flagged counts and the
 * most severe rows, the series (time buckets, or a row sample without a time key), the score sample and the drift
 * moments; or, when the pass reconstructs, each feature's squared and largest reconstruction errors. Its totals go
 * to the accumulators once ({@link #finish}), when the partition's rows are exhausted.
 *
 * <p>Cost per block: one read of t2 and q per row; per row with a time key or a sample, its key hash and a bucket
 * update; candidates and samples allocate only for the rows they admit (a row more severe than the current top rows,
 * a rank the sample keeps). Reconstruction reads the block twice.
 */
final class PartitionGathering {
  private static final long MICROS_PER_SECOND = 1_000_000L;
  private static final long SECONDS_PER_DAY = 86_400L;
  private static final long GOLDEN = 0x9e3779b97f4a7c15L;
  /** Features named per most severe row (their squared residuals). */
  private static final int TOP_FEATURES = 5;
  /** Scores kept per sampled row (the score map plots PC1 against PC2 and PC3). */
  private static final int SAMPLE_SCORES = 3;

  private final ScoringPass.Spec spec;
  private final ScoringPass.Layout layout;
  private final ScoringPass.Counters counters;
  private final Scorer scorer;
  private final int d;
  private final int k;
  private final int p;
  private final int[] passOrdinals;

  private long scored;
  private long dropped;
  private long unknown;
  /** Groups without a model met in this partition (at most {@link #UNKNOWN_LISTED}), as text. */
  private final java.util.Set<String> unknownGroups = new java.util.LinkedHashSet<>();
  static final int UNKNOWN_LISTED = 20;
  private long flaggedT2;
  private long flaggedQ;
  private long flaggedBoth;
  private final double[] sse;
  private final double[] maxAbs;
  private final double[] ssd;
  private final TimeBuckets buckets;
  private final HashSample<double[]> seriesSample;
  private final HashSample<ScoringPass.SampledRow> sample;
  private final KeyHash keyHash;
  private final long seriesStream = SeedStream.mix(ScoringPass.SERIES_SEED + GOLDEN);
  private final long sampleStream = SeedStream.mix(ScoringPass.SAMPLE_SEED + GOLDEN);
  private List<Function1<Object, Object>> toExternal;
  /** The partition's moments against the model, when the pass gathers them (new data); else null. */
  private final DriftMoments drift;
  private final double[] modelMeans;

  /** @param passOrdinals where the reader's source row holds pass-through column c */
  PartitionGathering(ScoringPass.Spec spec, ScoringPass.Layout layout, ScoringPass.Counters counters,
      int[] passOrdinals) {
    this.spec = spec;
    this.layout = layout;
    this.counters = counters;
    this.scorer = spec.scorer();
    this.d = spec.features().size();
    this.k = scorer.components();
    this.p = layout.passThrough();
    this.passOrdinals = passOrdinals;
    this.sse = new double[d];
    this.maxAbs = new double[d];
    this.ssd = new double[d];
    boolean scoring = !spec.reconstruct();
    this.buckets = scoring && layout.timeColumn() >= 0 ? new TimeBuckets(counters.series().limit()) : null;
    this.seriesSample = scoring && buckets == null ? new HashSample<>(counters.seriesSample().capacity()) : null;
    this.sample = scoring && counters.sample().capacity() > 0 ? new HashSample<>(counters.sample().capacity())
        : null;
    int[] keyOrdinals = Arrays.copyOf(passOrdinals, layout.keys());
    this.keyHash = new KeyHash(keyOrdinals, Arrays.copyOf(layout.types(), layout.keys()));
    this.drift = scoring && counters.drift() != null ? new DriftMoments(d, k) : null;
    this.modelMeans = new double[d];
    for (int j = 0; j < d && spec.groups() == null; j++) {
      modelMeans[j] = scorer.mean(j);
    }
  }

  /** Rows of a group without a model ({@code apply.unknown-group}). */
  void unknown(io.eigenmill.engine.KeyValues key, int rows) {
    unknown += rows;
    if (unknownGroups.size() < UNKNOWN_LISTED) {
      unknownGroups.add(key.display(spec.groups().keys().names()));
    }
  }

  /** Rows the reader dropped for a missing cell. */
  void dropped(int rows) {
    dropped += rows;
  }

  /** Gathers the rows of a block just scored. */
  void add(ScoreBlocks b) {
    scored += b.rows();
    if (spec.reconstruct()) {
      accumulateErrors(b);
    } else {
      flagAndCollect(b);
      gather(b);
      if (drift != null) {
        drift.addBlock(b.x, b.m, b.rows(), modelMeans, b.scores, scorer.residuals());
      }
    }
  }

  private void flagAndCollect(ScoreBlocks b) {
    if (b.group == GroupScoring.UNKNOWN) {
      // rows of a group without a model, kept as unusual (apply.unknown-group = flag): flagged by both
      flaggedT2 += b.rows();
      flaggedQ += b.rows();
      flaggedBoth += b.rows();
      return;
    }
    double t2Limit = b.t2Limit;
    double qLimit = b.qLimit;
    double[] t2 = b.t2;
    double[] q = b.q;
    for (int i = 0, count = b.rows(); i < count; i++) {
      boolean a = t2[i] > t2Limit;
      boolean c = qLimit > 0 && q[i] > qLimit;
      flaggedT2 += a ? 1 : 0;
      flaggedQ += c ? 1 : 0;
      flaggedBoth += a && c ? 1 : 0;
      double severity = Math.max(t2[i] / t2Limit, qLimit > 0 ? q[i] / qLimit : 0.0);
      if (severity > counters.top().threshold()) {
        counters.top().add(candidate(b, i, severity));
      }
    }
  }

  /**
   * Row i as a most-severe candidate: keys as text ({@link #keyText}), its largest residuals. Only rows more severe
   * than the current top rows come here.
   */
  private TopRows.Candidate candidate(ScoreBlocks b, int i, double severity) {
    InternalRow src = b.source(i);
    List<String> keys = new ArrayList<>(p);
    for (int c = 0; c < p; c++) {
      keys.add(keyText(src, c));
    }
    Scorer s = b.scorer;
    int dm = s.dimension();
    int top = Math.min(TOP_FEATURES, dm);
    int[] idx = new int[top];
    double[] val = new double[top];
    Arrays.fill(val, -1);
    for (int j = 0; j < dm; j++) {
      double r = s.residual(i, j, b.rows());
      double v = r * r;
      if (v > val[top - 1]) {
        int at = top - 1;
        while (at > 0 && val[at - 1] < v) {
          val[at] = val[at - 1];
          idx[at] = idx[at - 1];
          at--;
        }
        val[at] = v;
        idx[at] = b.columns == null ? j : b.columns[j];
      }
    }
    return new TopRows.Candidate(keys, severity, b.t2[i], b.q[i], idx, val, b.t2[i] > b.t2Limit,
        b.qLimit > 0 && b.q[i] > b.qLimit);
  }

  /**
   * Pass-through value c of {@code src} as text: a timestamp as an ISO-8601 instant in UTC
   * ({@code 2026-11-20T22:50:00Z}), a timestamp without time zone as an ISO-8601 local date-time, a date as
   * {@code 2026-11-20}, anything else as its external value prints; "null" for null.
   */
  private String keyText(InternalRow src, int c) {
    int o = passOrdinals[c];
    DataType type = layout.types()[c];
    if (src.isNullAt(o)) {
      return "null";
    }
    if (type.equals(DataTypes.TimestampType)) {
      long micros = src.getLong(o);
      return Instant.ofEpochSecond(Math.floorDiv(micros, MICROS_PER_SECOND),
          Math.floorMod(micros, MICROS_PER_SECOND) * 1000L).toString();
    }
    if (type.equals(DataTypes.TimestampNTZType)) {
      long micros = src.getLong(o);
      return LocalDateTime.ofEpochSecond(Math.floorDiv(micros, MICROS_PER_SECOND),
          (int) (Math.floorMod(micros, MICROS_PER_SECOND) * 1000L), ZoneOffset.UTC).toString();
    }
    if (type.equals(DataTypes.DateType)) {
      return LocalDate.ofEpochDay(src.getInt(o)).toString();
    }
    return String.valueOf(external(src, c));
  }

  private Object external(InternalRow src, int c) {
    if (toExternal == null) {
      toExternal = new ArrayList<>();
      for (DataType t : layout.types()) {
        toExternal.add(CatalystTypeConverters.createToScalaConverter(t));
      }
    }
    int o = passOrdinals[c];
    return src.isNullAt(o) ? null : toExternal.get(c).apply(src.get(o, layout.types()[c]));
  }

  /** Series (time buckets, or a row sample without a time key) and the score sample. */
  private void gather(ScoreBlocks b) {
    boolean keyed = seriesSample != null || sample != null;
    if (buckets == null && !keyed) {
      return;
    }
    if (b.group == GroupScoring.UNKNOWN) {
      return;
    }
    int time = buckets == null ? -1 : passOrdinals[layout.timeColumn()];
    boolean days = layout.timeInDays();
    double t2Limit = b.t2Limit;
    double qLimit = b.qLimit;
    boolean grouped = spec.groups() != null;
    double[] t2 = b.t2;
    double[] q = b.q;
    for (int i = 0, count = b.rows(); i < count; i++) {
      InternalRow src = b.source(i);
      // with groups each row has its group's limits: the series holds T2 and Q as ratios to them (limit 1)
      double t2i = grouped ? t2[i] / t2Limit : t2[i];
      double qi = grouped ? (qLimit > 0 ? q[i] / qLimit : 0.0) : q[i];
      if (time >= 0 && !src.isNullAt(time)) {
        long seconds = days ? src.getInt(time) * SECONDS_PER_DAY : Math.floorDiv(src.getLong(time), MICROS_PER_SECOND);
        buckets.add(seconds, t2i, qi, t2[i] > t2Limit, qLimit > 0 && q[i] > qLimit);
      }
      if (keyed) {
        long h = keyHash.of(src);
        if (seriesSample != null) {
          long rank = SeedStream.mix(h ^ seriesStream);
          if (seriesSample.admits(rank)) {
            seriesSample.offer(rank, valuesHash(b, i), new double[] {t2i, qi});
          }
        }
        if (sample != null) {
          long rank = SeedStream.mix(h ^ sampleStream);
          if (sample.admits(rank)) {
            sample.offer(rank, valuesHash(b, i), new ScoringPass.SampledRow(keyValues(src), firstScores(b, i)));
          }
        }
      }
    }
  }

  /** A hash of row i's feature values: orders rows of equal keys (and rows of a table without keys). */
  private long valuesHash(ScoreBlocks b, int i) {
    double[] x = b.x;
    int m = b.m;
    long h = GOLDEN;
    for (int j = 0; j < d; j++) {
      h = (h ^ Double.doubleToLongBits(x[j * m + i])) * 0x100000001b3L;
    }
    return SeedStream.mix(h);
  }

  private Object[] keyValues(InternalRow src) {
    Object[] out = new Object[layout.keys()];
    for (int c = 0; c < out.length; c++) {
      int o = passOrdinals[c];
      out[c] = src.isNullAt(o) ? null : InternalRow.copyValue(src.get(o, layout.types()[c]));
    }
    return out;
  }

  private double[] firstScores(ScoreBlocks b, int i) {
    double[] out = new double[Math.min(SAMPLE_SCORES, b.k)];
    int count = b.rows();
    for (int c = 0; c < out.length; c++) {
      out[c] = b.scores[c * count + i];
    }
    return out;
  }

  private void accumulateErrors(ScoreBlocks b) {
    double[] x = b.x;
    int m = b.m;
    int count = b.rows();
    for (int j = 0; j < d; j++) {
      for (int i = 0; i < count; i++) {
        double orig = x[j * m + i];
        double err = orig - scorer.reconstructed(x, m, i, j, count);
        sse[j] += err * err;
        maxAbs[j] = Math.max(maxAbs[j], Math.abs(err));
      }
    }
    for (int j = 0; j < d; j++) {
      double mu = scorer.mean(j);
      for (int i = 0; i < count; i++) {
        double dev = x[j * m + i] - mu;
        ssd[j] += dev * dev;
      }
    }
  }

  /** The partition's totals, once. */
  void finish() {
    counters.scored().add(scored);
    counters.dropped().add(dropped);
    if (unknown > 0) {
      counters.unknown().add(unknown);
      unknownGroups.forEach(counters.unknownGroups()::add);
    }
    if (spec.reconstruct()) {
      counters.errors().addSums(scored, sse, maxAbs, ssd);
      return;
    }
    counters.flaggedT2().add(flaggedT2);
    counters.flaggedQ().add(flaggedQ);
    counters.flaggedBoth().add(flaggedBoth);
    if (buckets != null && !buckets.isEmpty()) {
      counters.series().add(buckets);
    }
    if (seriesSample != null && !seriesSample.isEmpty()) {
      counters.seriesSample().add(seriesSample);
    }
    if (sample != null && !sample.isEmpty()) {
      counters.sample().add(sample);
    }
    if (drift != null) {
      counters.drift().addPartition(org.apache.spark.TaskContext.getPartitionId(), drift);
    }
  }
}
