package io.eigenmill.engine;

import java.io.Serializable;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.List;
import org.apache.spark.api.java.JavaPairRDD;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.api.java.function.Function2;
import org.apache.spark.api.java.function.Function;
import scala.Tuple2;

/**
 * Merges one partial per partition in a fixed order, so that a run is bit-for-bit repeatable: Spark's own
 * {@code reduce}/{@code treeReduce} combine results in the order tasks finish, which changes floating-point sums
 * from run to run. Partials are merged as a balanced binary tree over the partition index (pairwise merging also keeps
 * the rounding error growth logarithmic). Up to {@link #DIRECT} partitions are collected and merged on the driver;
 * more are first merged in groups of about sqrt(P) consecutive partitions on the executors (one small shuffle of
 * partials, each group sorted by partition index before merging), so the driver holds about sqrt(P) partials.
 */
public final class OrderedMerge {
  static final int DIRECT = 64;

  private OrderedMerge() {}

  public static <T extends Serializable> T merge(JavaRDD<T> partials,
      Function2<T, T, T> merge) {
    int p = partials.getNumPartitions();
    List<T> ordered;
    if (p <= DIRECT) {
      ordered = partials.collect();
    } else {
      int fan = (int) Math.ceil(Math.sqrt(p));
      JavaPairRDD<Integer, Tuple2<Integer, T>> keyed = JavaPairRDD.fromJavaRDD(
          partials.mapPartitionsWithIndex(new IndexPartials<T>(fan), true));
      List<Tuple2<Integer, T>> groups = keyed.groupByKey((p + fan - 1) / fan)
          .mapValues(new MergeGroup<T>(merge)).collect();
      List<Tuple2<Integer, T>> sorted = new ArrayList<>(groups);
      sorted.sort((a, b) -> Integer.compare(a._1(), b._1()));
      ordered = new ArrayList<>();
      for (Tuple2<Integer, T> g : sorted) {
        ordered.add(g._2());
      }
    }
    return tree(ordered, merge);
  }

  /**
   * Merges one partial per partition index, {@code slots[p]} null where partition p holds none, in exactly the tree
   * {@link #merge} builds over P partitions: a null slot stands for an empty partial, the identity of the merge, so
   * the result is bit for bit what {@link #merge} gives when those partitions hold empty partials (a keyed pass's
   * partials of one key against a pass over that key's rows alone). Null when every slot is null.
   */
  public static <T extends Serializable> T mergeSlots(List<T> slots, Function2<T, T, T> merge) {
    int p = slots.size();
    if (p <= DIRECT) {
      return treeWithGaps(slots, merge);
    }
    int fan = (int) Math.ceil(Math.sqrt(p));
    List<T> groups = new ArrayList<>();
    for (int from = 0; from < p; from += fan) {
      groups.add(treeWithGaps(slots.subList(from, Math.min(p, from + fan)), merge));
    }
    return treeWithGaps(groups, merge);
  }

  /** {@link #tree} where null items are the identity (null when all are). */
  static <T extends Serializable> T treeWithGaps(List<T> items, Function2<T, T, T> merge) {
    if (items.isEmpty()) {
      return null;
    }
    List<T> level = new ArrayList<>(items);
    try {
      while (level.size() > 1) {
        List<T> next = new ArrayList<>((level.size() + 1) / 2);
        for (int i = 0; i + 1 < level.size(); i += 2) {
          T a = level.get(i);
          T b = level.get(i + 1);
          next.add(a == null ? b : b == null ? a : merge.call(a, b));
        }
        if (level.size() % 2 == 1) {
          next.add(level.get(level.size() - 1));
        }
        level = next;
      }
    } catch (Exception e) {
      throw new IllegalStateException("merging partial results failed", e);
    }
    return level.get(0);
  }

  /** Balanced pairwise merge of an ordered, non-empty list without nulls. */
  public static <T extends Serializable> T tree(List<T> items, Function2<T, T, T> merge) {
    if (items.isEmpty()) {
      throw new IllegalArgumentException("nothing to merge");
    }
    return treeWithGaps(items, merge);
  }

  /** Tags each partition's single partial with its group (index / fan) and its partition index. */
  static final class IndexPartials<T extends Serializable> implements Function2<Integer,
      Iterator<T>, Iterator<Tuple2<Integer, Tuple2<Integer, T>>>> {
    private static final long serialVersionUID = 1L;
    private final int fan;

    IndexPartials(int fan) {
      this.fan = fan;
    }

    @Override
    public Iterator<Tuple2<Integer, Tuple2<Integer, T>>> call(Integer index,
        Iterator<T> it) {
      List<Tuple2<Integer, Tuple2<Integer, T>>> out = new ArrayList<>(1);
      while (it.hasNext()) {
        out.add(new Tuple2<>(index / fan, new Tuple2<>(index, it.next())));
      }
      return out.iterator();
    }
  }

  static final class MergeGroup<T extends Serializable> implements
      Function<Iterable<Tuple2<Integer, T>>, T> {
    private static final long serialVersionUID = 1L;
    private final Function2<T, T, T> merge;

    MergeGroup(Function2<T, T, T> merge) {
      this.merge = merge;
    }

    @Override
    public T call(Iterable<Tuple2<Integer, T>> group) {
      List<Tuple2<Integer, T>> items = new ArrayList<>();
      group.forEach(items::add);
      items.sort((a, b) -> Integer.compare(a._1(), b._1()));
      List<T> ordered = new ArrayList<>(items.size());
      for (Tuple2<Integer, T> t : items) {
        ordered.add(t._2());
      }
      return tree(ordered, merge);
    }
  }
}
