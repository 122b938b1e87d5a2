package io.eigenmill.spark;

import io.eigenmill.math.Scorer;
import io.eigenmill.settings.Choices.MissingPolicy;
import java.io.Serializable;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.List;
import java.util.NoSuchElementException;
import org.apache.spark.api.java.function.MapPartitionsFunction;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Encoders;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.apache.spark.util.LongAccumulator;

/**
 * Scores every row of a table against a model, one block of rows at a time ({@link Scorer}: two dgemm per block), and
 * emits per row the pass-through columns (keys, partition columns), the scores {@code pc_1..pc_k}, {@code t2},
 * {@code q} and the flags {@code flag_t2}, {@code flag_q} against the control limits; or, in reconstruction mode, the
 * pass-through columns and each feature reconstructed from k components in original units. Counts, the most severe
 * rows and per-feature errors are gathered in accumulators during the same pass (the write), so there is no extra
 * pass over the input.
 */
public final class ScoringPass {
  private ScoringPass() {}

  /** What the pass needs on the executors. */
  public record Spec(Scorer scorer, int passThrough, List<String> features, int blockRows, MissingPolicy missing,
      double[] imputeValues, double t2Limit, double qLimit, boolean reconstruct) implements Serializable {}

  /** Driver-side accumulators of one pass. */
  public record Counters(LongAccumulator scored, LongAccumulator dropped, LongAccumulator flaggedT2,
      LongAccumulator flaggedQ, LongAccumulator flaggedBoth, TopRows top, FeatureErrors errors)
      implements Serializable {

    public static Counters register(org.apache.spark.SparkContext sc, String stage, int d, int topRows) {
      TopRows top = new TopRows(topRows);
      sc.register(top, "eigenmill top rows (" + stage + ")");
      FeatureErrors errors = new FeatureErrors(d);
      sc.register(errors, "eigenmill feature errors (" + stage + ")");
      return new Counters(sc.longAccumulator(stage + " scored"), sc.longAccumulator(stage + " dropped"),
          sc.longAccumulator(stage + " flagged T2"), sc.longAccumulator(stage + " flagged Q"),
          sc.longAccumulator(stage + " flagged both"), top, errors);
    }
  }

  /**
   * The scored table (lazy): {@code passThrough} columns of {@code table} first, then the scores. Nothing runs
   * until it is written.
   */
  public static Dataset<Row> apply(Dataset<Row> table, List<String> passThrough, Spec spec, Counters counters) {
    List<Column> cols = new ArrayList<>();
    for (String c : passThrough) {
      cols.add(functions.col(c));
    }
    for (String f : spec.features()) {
      cols.add(functions.col(f).cast("double"));
    }
    Dataset<Row> input = table.select(cols.toArray(new Column[0]));
    StructType out = new StructType();
    for (int i = 0; i < passThrough.size(); i++) {
      out = out.add(input.schema().fields()[i]);
    }
    if (spec.reconstruct()) {
      for (String f : spec.features()) {
        out = out.add(f, DataTypes.DoubleType, true);
      }
    } else {
      for (int c = 1; c <= spec.scorer().components(); c++) {
        out = out.add("pc_" + c, DataTypes.DoubleType, false);
      }
      out = out.add("t2", DataTypes.DoubleType, false).add("q", DataTypes.DoubleType, false)
          .add("flag_t2", DataTypes.BooleanType, false).add("flag_q", DataTypes.BooleanType, false);
    }
    return input.mapPartitions(new ScoreRows(spec, counters), Encoders.row(out));
  }

  static final class ScoreRows implements MapPartitionsFunction<Row, Row> {
    private static final long serialVersionUID = 1L;
    private final Spec spec;
    private final Counters counters;

    ScoreRows(Spec spec, Counters counters) {
      this.spec = spec;
      this.counters = counters;
    }

    @Override
    public Iterator<Row> call(Iterator<Row> rows) {
      return new BlockIterator(rows, spec, counters);
    }
  }

  /** Reads a block, scores it, hands out its rows; repeats. One set of block arrays per partition. */
  static final class BlockIterator implements Iterator<Row> {
    private final Iterator<Row> in;
    private final Spec spec;
    private final Counters counters;
    private final Scorer scorer;
    private final int d;
    private final int k;
    private final int m;
    private final int p;
    private final Row[] held;
    private final double[] x;
    private final double[] scores;
    private final double[] t2;
    private final double[] q;
    private final double[] sse;
    private final double[] maxAbs;
    private final double[] ssd;
    private long rowsScored;
    private int count;
    private int pos;
    private boolean finished;

    BlockIterator(Iterator<Row> in, Spec spec, Counters counters) {
      this.in = in;
      this.spec = spec;
      this.counters = counters;
      this.scorer = spec.scorer();
      this.d = scorer.dimension();
      this.k = scorer.components();
      this.m = spec.blockRows();
      this.p = spec.passThrough();
      this.held = new Row[m];
      this.x = new double[m * d];
      this.scores = new double[Math.max(1, m * k)];
      this.t2 = new double[m];
      this.q = new double[m];
      this.sse = new double[d];
      this.maxAbs = new double[d];
      this.ssd = new double[d];
    }

    @Override
    public boolean hasNext() {
      if (pos < count) {
        return true;
      }
      fill();
      if (count == 0) {
        finish();
        return false;
      }
      return true;
    }

    @Override
    public Row next() {
      if (!hasNext()) {
        throw new NoSuchElementException();
      }
      int i = pos++;
      Row src = held[i];
      held[i] = null;
      Object[] values = new Object[p + (spec.reconstruct() ? d : k + 4)];
      for (int c = 0; c < p; c++) {
        values[c] = src.get(c);
      }
      if (spec.reconstruct()) {
        for (int j = 0; j < d; j++) {
          values[p + j] = scorer.reconstructed(x, m, i, j, count);
        }
      } else {
        for (int c = 0; c < k; c++) {
          values[p + c] = scores[c * count + i];
        }
        values[p + k] = t2[i];
        values[p + k + 1] = q[i];
        values[p + k + 2] = t2[i] > spec.t2Limit();
        values[p + k + 3] = spec.qLimit() > 0 && q[i] > spec.qLimit();
      }
      return RowFactory.create(values);
    }

    private void fill() {
      count = 0;
      pos = 0;
      long dropped = 0;
      while (count < m && in.hasNext()) {
        Row row = in.next();
        if (readRow(row, count)) {
          held[count++] = row;
        } else {
          dropped++;
        }
      }
      counters.dropped().add(dropped);
      if (count > 0) {
        scorer.score(x, count, m, scores, t2, q);
        rowsScored += count;
        if (spec.reconstruct()) {
          accumulateErrors();
        } else {
          flagAndCollect();
        }
      }
    }

    /** Copies the features of {@code row} into column {@code i} of the block; false when the row is dropped. */
    private boolean readRow(Row row, int i) {
      for (int j = 0; j < d; j++) {
        int c = p + j;
        double v = row.isNullAt(c) ? Double.NaN : row.getDouble(c);
        if (v - v != 0.0) {
          if (spec.missing() != MissingPolicy.IMPUTE_MEAN) {
            return false;
          }
          v = spec.imputeValues()[j];
        }
        x[j * m + i] = v;
      }
      return true;
    }

    private void flagAndCollect() {
      long f2 = 0;
      long fq = 0;
      long both = 0;
      double qLimit = spec.qLimit();
      for (int i = 0; i < count; i++) {
        boolean a = t2[i] > spec.t2Limit();
        boolean b = qLimit > 0 && q[i] > qLimit;
        f2 += a ? 1 : 0;
        fq += b ? 1 : 0;
        both += a && b ? 1 : 0;
        double severity = Math.max(t2[i] / spec.t2Limit(), qLimit > 0 ? q[i] / qLimit : 0.0);
        if (severity > counters.top().threshold()) {
          counters.top().add(candidate(i, severity));
        }
      }
      counters.flaggedT2().add(f2);
      counters.flaggedQ().add(fq);
      counters.flaggedBoth().add(both);
    }

    private TopRows.Candidate candidate(int i, double severity) {
      List<String> keys = new ArrayList<>(p);
      for (int c = 0; c < p; c++) {
        keys.add(String.valueOf(held[i].get(c)));
      }
      int top = Math.min(5, d);
      int[] idx = new int[top];
      double[] val = new double[top];
      java.util.Arrays.fill(val, -1);
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

    private void finish() {
      if (finished) {
        return;
      }
      finished = true;
      counters.scored().add(rowsScored);
      if (spec.reconstruct()) {
        counters.errors().addSums(rowsScored, sse, maxAbs, ssd);
      }
    }
  }

  /** The pass-through columns present in {@code schema}, keys first, then partition columns not among the keys. */
  public static List<String> passThrough(StructType schema, List<String> keys, List<String> partitionColumns) {
    List<String> out = new ArrayList<>(keys);
    for (String c : partitionColumns) {
      if (!out.contains(c)) {
        for (StructField f : schema.fields()) {
          if (f.name().equals(c)) {
            out.add(c);
          }
        }
      }
    }
    return out;
  }
}
