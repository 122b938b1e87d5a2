package io.eigenmill.kmeans.math;

import java.io.Serializable;
import java.util.Arrays;

/**
 * A growable list of points with their 64-bit identities, point-major: the candidates that the k-means|| rounds
 * sample (a few times k per run and round, so the list stays small). Merging appends; {@link #canonical} sorts by
 * identity, then by coordinates, and drops exact duplicates, so the list no longer depends on the order in which
 * partitions delivered their samples.
 */
public final class PointList implements Serializable {
  private static final long serialVersionUID = 1L;

  private final int d;
  private int size;
  private long[] ids;
  private double[] values;

  public PointList(int d) {
    this.d = d;
    this.ids = new long[4];
    this.values = new double[4 * d];
  }

  public int size() {
    return size;
  }

  public int dimension() {
    return d;
  }

  public long id(int i) {
    return ids[i];
  }

  public double value(int i, int l) {
    return values[i * d + l];
  }

  /** The points, point-major {@code size() x d} (a copy). */
  public double[] points() {
    return Arrays.copyOf(values, size * d);
  }

  /** Appends the point whose coordinate l is {@code src[off + l * stride]}. */
  public void add(long id, double[] src, int off, int stride) {
    if (size == ids.length) {
      ids = Arrays.copyOf(ids, 2 * size);
      values = Arrays.copyOf(values, 2 * size * d);
    }
    ids[size] = id;
    int base = size * d;
    for (int l = 0; l < d; l++) {
      values[base + l] = src[off + l * stride];
    }
    size++;
  }

  /** Appends every point of {@code other}; returns this. */
  public PointList merge(PointList other) {
    for (int i = 0; i < other.size; i++) {
      add(other.ids[i], other.values, i * d, 1);
    }
    return this;
  }

  /** A new list sorted by identity, then coordinates, without exact duplicates (equal coordinates). */
  public PointList canonical() {
    Integer[] order = new Integer[size];
    for (int i = 0; i < size; i++) {
      order[i] = i;
    }
    Arrays.sort(order, this::compare);
    PointList out = new PointList(d);
    for (int n = 0; n < size; n++) {
      int i = order[n];
      if (!out.contains(values, i * d)) {
        out.add(ids[i], values, i * d, 1);
      }
    }
    return out;
  }

  /** True when a point with exactly these coordinates is in the list (linear scan: lists are short). */
  public boolean contains(double[] point, int off) {
    for (int i = 0; i < size; i++) {
      if (Arrays.equals(values, i * d, i * d + d, point, off, off + d)) {
        return true;
      }
    }
    return false;
  }

  private int compare(int a, int b) {
    int c = Long.compare(ids[a], ids[b]);
    for (int l = 0; c == 0 && l < d; l++) {
      c = Double.compare(values[a * d + l], values[b * d + l]);
    }
    return c;
  }
}
