package io.eigenmill.pca;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.engine.KeyValues;
import io.eigenmill.io.PcaModel;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * The groups of a grouped fit ({@code reduce.group-by}).
 *
 * @param by the group columns and their types
 * @param minRows the fewest usable rows a group needed for a model
 * @param onDriver whether the groups were merged and solved on the driver (else on the executors)
 * @param groups every group, by rows read (descending); skipped groups have no model
 */
public record Groups(KeyColumns by, long minRows, boolean onDriver, List<GroupFit> groups) {

  /** The models of the groups that have one, by key, in the order of {@link #groups}. */
  public Map<KeyValues, PcaModel> models() {
    Map<KeyValues, PcaModel> m = new LinkedHashMap<>();
    for (GroupFit g : groups) {
      if (g.hasModel()) {
        m.put(g.key(), g.solved().model());
      }
    }
    return m;
  }

  public long skipped() {
    return groups.stream().filter(g -> !g.hasModel()).count();
  }
}
