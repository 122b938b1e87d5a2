package io.eigenmill.monitor;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.engine.KeyValues;
import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.math.Scorer;
import io.eigenmill.settings.Choices.UnknownGroup;
import io.eigenmill.settings.JobSettings;
import java.io.Serializable;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/**
 * What a scoring pass needs to score each row with its group's model ({@code reduce.group-by}): the group columns,
 * each group's scorer (over the union of the groups' features, which the block holds: a group whose constant
 * columns were dropped reads its own columns of the block) and control limits, the number of score columns (the
 * largest k; a row of a group with fewer components has nulls beyond its k), and what a row of a group without a
 * model gets ({@code apply.unknown-group}).
 *
 * @param keys the group columns; they are among the pass-through columns of the scores
 * @param index group key to group number
 * @param columns per group, the block column of each of its features (null when they are the block's columns)
 */
public record GroupScoring(KeyColumns keys, Map<KeyValues, Integer> index, List<KeyValues> groups, Scorer[] scorers,
    int[][] columns, double[] t2Limits, double[] qLimits, int[] ks, int outputK, UnknownGroup unknown)
    implements Serializable {

  /** Group number of an unknown group. */
  public static final int UNKNOWN = -1;

  /** The scoring of {@code models} (key: the group values as text) over the block columns {@code features}. */
  public static GroupScoring of(KeyColumns keys, Map<KeyValues, PcaModel> models, List<String> features,
      JobSettings.Monitor monitor, boolean fittedRows, UnknownGroup unknown) {
    int g = models.size();
    Map<KeyValues, Integer> index = new HashMap<>();
    List<KeyValues> groups = new ArrayList<>();
    Scorer[] scorers = new Scorer[g];
    int[][] columns = new int[g][];
    double[] t2 = new double[g];
    double[] q = new double[g];
    int[] ks = new int[g];
    int outputK = 0;
    int i = 0;
    for (Map.Entry<KeyValues, PcaModel> e : models.entrySet()) {
      PcaModel m = e.getValue();
      index.put(e.getKey(), i);
      groups.add(e.getKey());
      scorers[i] = new Scorer(m.means(), m.scales(), m.loadings(), m.eigenvalues(), m.k());
      if (!m.features().equals(features)) {
        columns[i] = new int[m.d()];
        for (int j = 0; j < m.d(); j++) {
          columns[i][j] = features.indexOf(m.features().get(j));
        }
      }
      ScoringPass.Limits limits = ScoringPass.Limits.of(m, monitor, fittedRows);
      t2[i] = limits.t2();
      q[i] = limits.q();
      ks[i] = m.k();
      outputK = Math.max(outputK, m.k());
      i++;
    }
    return new GroupScoring(keys, index, groups, scorers, columns, t2, q, ks, outputK, unknown);
  }

  public int group(KeyValues key) {
    Integer g = index.get(key);
    return g == null ? UNKNOWN : g;
  }
}
