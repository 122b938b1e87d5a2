package io.eigenmill.monitor;

import io.eigenmill.engine.BlockFiller;
import io.eigenmill.engine.BlockSink;
import io.eigenmill.engine.KeyHash;
import io.eigenmill.engine.PartitionPasses;
import io.eigenmill.math.SeedStream;
import io.eigenmill.monitor.math.DriftMoments;
import io.eigenmill.monitor.math.HashSample;
import io.eigenmill.monitor.math.Scorer;
import io.eigenmill.monitor.math.TimeBuckets;
import io.eigenmill.settings.Choices.MissingPolicy;
import java.time.Instant;
import java.time.LocalDate;
import java.time.LocalDateTime;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Iterator;
import java.util.List;
import java.util.NoSuchElementException;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.catalyst.CatalystTypeConverters;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.expressions.GenericInternalRow;
import org.apache.spark.sql.catalyst.util.ArrayData;
import org.apache.spark.sql.catalyst.util.MapData;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.Decimal;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import org.apache.spark.unsafe.types.CalendarInterval;
import org.apache.spark.unsafe.types.UTF8String;
import scala.Function1;

/**
 * One partition of a scoring pass, whichever reader feeds it: rows are read into a column-major block of
 * {@code blockRows} rows (missing cells drop the row or take the model mean), the block is scored ({@link Scorer}),
 * flagged and gathered (most severe rows, reconstruction errors, series, samples), and its rows are handed out as
 * internal rows. A reader only fills the block and says where block row i comes from ({@link #source}); everything
 * else is here, once. The partition's totals go to the accumulators once, when its rows are exhausted.
 *
 * <p>The rows handed out are one reused view ({@link ScoredRow}) over the block and the source row: no copy, no
 * allocation per row. A view is valid until the next call of {@code next()}; Spark's row scan over these rows turns
 * each into its own binary row at once (and {@link ScoredRow#copy} makes an independent one), so nothing downstream
 * holds a view. The columnar reader hands out a batch's rows before it asks for the next batch (which reuses the
 * vectors).
 */
abstract class ScoreBlocks implements Iterator<InternalRow>, BlockSink {
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
  final int d;
  private final int k;
  final int m;
  final int p;
  private final boolean impute;
  final double[] x;
  private final double[] scores;
  private final double[] t2;
  private final double[] q;
  private final boolean[] bad;
  private boolean anyBad;
  /** Where block row i comes from in the reader's current source (the batch row on the columnar path). */
  final int[] origins;
  private final int[] passOrdinals;
  /** Rows in the block. */
  int count;
  private int pos;
  private boolean finished;
  private final ScoredRow view;

  private long scored;
  private long dropped;
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
  ScoreBlocks(ScoringPass.Spec spec, ScoringPass.Layout layout, ScoringPass.Counters counters, int[] passOrdinals) {
    this.spec = spec;
    this.layout = layout;
    this.counters = counters;
    this.scorer = spec.scorer();
    this.d = scorer.dimension();
    this.k = scorer.components();
    this.m = spec.blockRows();
    this.p = layout.passThrough();
    this.impute = spec.missing() == MissingPolicy.IMPUTE_MEAN;
    this.x = new double[m * Math.max(1, d)];
    this.scores = new double[Math.max(1, m * k)];
    this.t2 = new double[m];
    this.q = new double[m];
    this.bad = new boolean[m];
    this.origins = new int[m];
    this.passOrdinals = passOrdinals.clone();
    this.view = new ScoredRow(this);
    this.sse = new double[d];
    this.maxAbs = new double[d];
    this.ssd = new double[d];
    boolean scoring = !spec.reconstruct();
    this.buckets = scoring && layout.timeColumn() >= 0 ? new TimeBuckets(counters.series().limit()) : null;
    this.seriesSample = scoring && buckets == null ? new HashSample<>(counters.seriesSample().capacity()) : null;
    this.sample = scoring && counters.sample().capacity() > 0 ? new HashSample<>(counters.sample().capacity())
        : null;
    int[] keyOrdinals = Arrays.copyOf(this.passOrdinals, layout.keys());
    this.keyHash = new KeyHash(keyOrdinals, Arrays.copyOf(layout.types(), layout.keys()));
    this.drift = scoring && counters.drift() != null ? new DriftMoments(d, k) : null;
    this.modelMeans = new double[d];
    for (int j = 0; j < d; j++) {
      modelMeans[j] = scorer.mean(j);
    }
  }

  /** Starts a new block and fills it; false when the partition has no rows left. */
  abstract boolean fill();

  /** The source row of block row i (pass-through column c at {@code passOrdinals[c]}). */
  abstract InternalRow source(int i);

  // ---- the block as a sink of feature values

  @Override
  public double[] block() {
    return x;
  }

  @Override
  public int ld() {
    return m;
  }

  @Override
  public int base() {
    return count;
  }

  /** A missing cell takes the model mean under impute-mean; otherwise its row is dropped (and counted). */
  @Override
  public void markMissing(int i, int j) {
    int row = count + i;
    if (impute) {
      x[j * m + row] = spec.imputeValues()[j];
    } else {
      bad[row] = true;
      anyBad = true;
    }
  }

  /** Accepts the {@code t} rows written at {@link #base()} (with their origins); returns how many stay. */
  int commit(int t) {
    int kept = t;
    if (anyBad) {
      kept = BlockFiller.compact(x, d, m, count, t, bad, origins);
      Arrays.fill(bad, count, count + t, false);
      anyBad = false;
      dropped += t - kept;
    }
    count += kept;
    return kept;
  }

  // ---- the rows handed out

  @Override
  public boolean hasNext() {
    if (pos < count) {
      return true;
    }
    if (finished) {
      return false;
    }
    count = 0;
    pos = 0;
    if (!fill()) {
      finish();
      return false;
    }
    scoreBlock();
    return true;
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

  // ---- the block's math, flags and gathering

  private void scoreBlock() {
    scorer.score(x, count, m, scores, t2, q);
    scored += count;
    if (spec.reconstruct()) {
      accumulateErrors();
    } else {
      flagAndCollect();
      gather();
      if (drift != null) {
        drift.addBlock(x, m, count, modelMeans, scores, scorer.residuals());
      }
    }
  }

  /** Score column c of block row i: pc_1..pc_k, t2, q; or the reconstruction of feature c. */
  double statistic(int c, int i) {
    if (spec.reconstruct()) {
      return scorer.reconstructed(x, m, i, c, count);
    }
    return c < k ? scores[c * count + i] : c == k ? t2[i] : q[i];
  }

  /** Flag column c (k + 2: flag_t2, k + 3: flag_q) of block row i. */
  boolean flag(int c, int i) {
    return c == k + 2 ? t2[i] > spec.t2Limit() : spec.qLimit() > 0 && q[i] > spec.qLimit();
  }

  private void flagAndCollect() {
    double t2Limit = spec.t2Limit();
    double qLimit = spec.qLimit();
    for (int i = 0; i < count; i++) {
      boolean a = t2[i] > t2Limit;
      boolean b = qLimit > 0 && q[i] > qLimit;
      flaggedT2 += a ? 1 : 0;
      flaggedQ += b ? 1 : 0;
      flaggedBoth += a && b ? 1 : 0;
      double severity = Math.max(t2[i] / t2Limit, qLimit > 0 ? q[i] / qLimit : 0.0);
      if (severity > counters.top().threshold()) {
        counters.top().add(candidate(i, severity));
      }
    }
  }

  /**
   * Row i as a most-severe candidate: keys as text ({@link #keyText}), its largest residuals. Only rows more severe
   * than the current top rows come here.
   */
  private TopRows.Candidate candidate(int i, double severity) {
    InternalRow src = source(i);
    List<String> keys = new ArrayList<>(p);
    for (int c = 0; c < p; c++) {
      keys.add(keyText(src, c));
    }
    int top = Math.min(TOP_FEATURES, d);
    int[] idx = new int[top];
    double[] val = new double[top];
    Arrays.fill(val, -1);
    for (int j = 0; j < d; j++) {
      double r = scorer.residual(i, j, count);
      double v = r * r;
      if (v > val[top - 1]) {
        int at = top - 1;
        while (at > 0 && val[at - 1] < v) {
          val[at] = val[at - 1];
          idx[at] = idx[at - 1];
          at--;
        }
        val[at] = v;
        idx[at] = j;
      }
    }
    return new TopRows.Candidate(keys, severity, t2[i], q[i], idx, val);
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
  private void gather() {
    boolean keyed = seriesSample != null || sample != null;
    if (buckets == null && !keyed) {
      return;
    }
    int time = buckets == null ? -1 : passOrdinals[layout.timeColumn()];
    boolean days = layout.timeInDays();
    double t2Limit = spec.t2Limit();
    double qLimit = spec.qLimit();
    for (int i = 0; i < count; i++) {
      InternalRow src = source(i);
      if (time >= 0 && !src.isNullAt(time)) {
        long seconds = days ? src.getInt(time) * SECONDS_PER_DAY : Math.floorDiv(src.getLong(time), MICROS_PER_SECOND);
        buckets.add(seconds, t2[i], q[i], t2[i] > t2Limit, qLimit > 0 && q[i] > qLimit);
      }
      if (keyed) {
        long h = keyHash.of(src);
        if (seriesSample != null) {
          long rank = SeedStream.mix(h ^ seriesStream);
          if (seriesSample.admits(rank)) {
            seriesSample.offer(rank, valuesHash(i), new double[] {t2[i], q[i]});
          }
        }
        if (sample != null) {
          long rank = SeedStream.mix(h ^ sampleStream);
          if (sample.admits(rank)) {
            sample.offer(rank, valuesHash(i), new ScoringPass.SampledRow(keyValues(src), firstScores(i)));
          }
        }
      }
    }
  }

  /** A hash of row i's feature values: orders rows of equal keys (and rows of a table without keys). */
  private long valuesHash(int i) {
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

  private double[] firstScores(int i) {
    double[] out = new double[Math.min(SAMPLE_SCORES, k)];
    for (int c = 0; c < out.length; c++) {
      out[c] = scores[c * count + i];
    }
    return out;
  }

  private void accumulateErrors() {
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
  private void finish() {
    finished = true;
    counters.scored().add(scored);
    counters.dropped().add(dropped);
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

  // ---- the readers

  /** Reads Parquet's columnar batches: features copied column by column, pass-through values left in the batch. */
  static final class FromBatches extends ScoreBlocks {
    private final Iterator<ColumnarBatch> batches;
    private final int[] featureOrdinals;
    private final int[] kinds;
    private final ColumnVector[] vectors;
    private ColumnarBatch batch;
    private int rows;
    private int start;

    FromBatches(Iterator<ColumnarBatch> batches, ScoringPass.Spec spec, ScoringPass.Layout layout,
        ScoringPass.Counters counters, int[] passOrdinals, int[] featureOrdinals, int[] kinds) {
      super(spec, layout, counters, passOrdinals);
      this.batches = batches;
      this.featureOrdinals = featureOrdinals;
      this.kinds = kinds;
      this.vectors = new ColumnVector[featureOrdinals.length];
    }

    /** The next slice of at most one block of the current batch (a block never spans two batches). */
    @Override
    boolean fill() {
      while (true) {
        if (batch != null && start < rows) {
          int t = Math.min(m, rows - start);
          for (int i = 0; i < t; i++) {
            origins[i] = start + i;
          }
          for (int j = 0; j < vectors.length; j++) {
            PartitionPasses.copyColumn(vectors[j], kinds[j], start, t, this, j);
          }
          commit(t);
          start += t;
          if (count > 0) {
            return true;
          }
        } else if (batches.hasNext()) {
          batch = batches.next();
          rows = batch.numRows();
          start = 0;
          for (int j = 0; j < vectors.length; j++) {
            vectors[j] = batch.column(featureOrdinals[j]);
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

    @Override
    boolean fill() {
      while (count < m && rows.hasNext()) {
        InternalRow row = rows.next();
        int at = count;
        for (int j = 0; j < d; j++) {
          int c = p + j;
          if (row.isNullAt(c)) {
            markMissing(0, j);
            continue;
          }
          double v = row.getDouble(c);
          x[j * m + at] = v;
          if (v - v != 0.0) {
            markMissing(0, j);
          }
        }
        if (commit(1) == 1) {
          // the scan may reuse its row object: keep a copy until the block's rows are handed out
          held[at] = row.copy();
        }
      }
      return count > 0;
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

  /**
   * A scored row as a view: pass-through columns read from the source row in their internal form, the scores and
   * flags from the scored block. Read-only; reused for every row of a partition.
   */
  static final class ScoredRow extends InternalRow {
    private static final long serialVersionUID = 1L;
    private final transient ScoreBlocks blocks;
    private final int p;
    private final int width;
    private final int[] passOrdinals;
    private final DataType[] types;
    private final int firstFlag;
    private transient InternalRow source;
    private int i;

    ScoredRow(ScoreBlocks blocks) {
      this.blocks = blocks;
      this.p = blocks.p;
      this.passOrdinals = blocks.passOrdinals;
      this.types = blocks.layout.types();
      int k = blocks.k;
      this.width = p + (blocks.spec.reconstruct() ? blocks.d : k + 4);
      this.firstFlag = blocks.spec.reconstruct() ? Integer.MAX_VALUE : p + k + 2;
    }

    void at(InternalRow source, int i) {
      this.source = source;
      this.i = i;
    }

    @Override
    public int numFields() {
      return width;
    }

    @Override
    public boolean isNullAt(int o) {
      return o < p && source.isNullAt(passOrdinals[o]);
    }

    @Override
    public boolean getBoolean(int o) {
      return o < p ? source.getBoolean(passOrdinals[o]) : blocks.flag(o - p, i);
    }

    @Override
    public double getDouble(int o) {
      return o < p ? source.getDouble(passOrdinals[o]) : blocks.statistic(o - p, i);
    }

    @Override
    public byte getByte(int o) {
      return source.getByte(passOrdinals[o]);
    }

    @Override
    public short getShort(int o) {
      return source.getShort(passOrdinals[o]);
    }

    @Override
    public int getInt(int o) {
      return source.getInt(passOrdinals[o]);
    }

    @Override
    public long getLong(int o) {
      return source.getLong(passOrdinals[o]);
    }

    @Override
    public float getFloat(int o) {
      return source.getFloat(passOrdinals[o]);
    }

    @Override
    public Decimal getDecimal(int o, int precision, int scale) {
      return source.getDecimal(passOrdinals[o], precision, scale);
    }

    @Override
    public UTF8String getUTF8String(int o) {
      return source.getUTF8String(passOrdinals[o]);
    }

    @Override
    public byte[] getBinary(int o) {
      return source.getBinary(passOrdinals[o]);
    }

    @Override
    public CalendarInterval getInterval(int o) {
      return source.getInterval(passOrdinals[o]);
    }

    @Override
    public InternalRow getStruct(int o, int numFields) {
      return source.getStruct(passOrdinals[o], numFields);
    }

    @Override
    public ArrayData getArray(int o) {
      return source.getArray(passOrdinals[o]);
    }

    @Override
    public MapData getMap(int o) {
      return source.getMap(passOrdinals[o]);
    }

    @Override
    public Object get(int o, DataType type) {
      if (o < p) {
        return source.isNullAt(passOrdinals[o]) ? null : source.get(passOrdinals[o], type);
      }
      return o >= firstFlag ? (Object) blocks.flag(o - p, i) : (Object) blocks.statistic(o - p, i);
    }

    /** An independent row with the same values (pass-through values copied). */
    @Override
    public InternalRow copy() {
      Object[] values = new Object[width];
      for (int o = 0; o < width; o++) {
        values[o] = o < p ? InternalRow.copyValue(get(o, types[o])) : get(o, null);
      }
      return new GenericInternalRow(values);
    }

    @Override
    public void setNullAt(int o) {
      throw new UnsupportedOperationException("a scored row is read-only");
    }

    @Override
    public void update(int o, Object value) {
      throw new UnsupportedOperationException("a scored row is read-only");
    }
  }
}
