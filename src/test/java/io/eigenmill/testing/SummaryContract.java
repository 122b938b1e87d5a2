package io.eigenmill.testing;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;

import io.eigenmill.math.BlockSummary;
import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.ObjectInputStream;
import java.io.ObjectOutputStream;
import java.io.Serializable;
import java.io.UncheckedIOException;

/**
 * The parts of the {@link BlockSummary} contract that hold for every summary alike, driven only through the
 * interface: the empty summary is the identity of merge on either side (bit for bit, state compared as the Java
 * serialization Spark ships it in, transient scratch excluded), merge leaves the other side unchanged, and the
 * factory and a summary survive serialization. What depends on the summary (merge of two halves against one pass,
 * within the summary's own rounding and against its own outside reference) is checked by each summary's test with
 * {@link #summarize} and {@link #mergedHalves}.
 */
public final class SummaryContract {
  private SummaryContract() {}

  /** The state of a summary (or a factory): its Java serialization. */
  public static byte[] state(Serializable s) {
    try (ByteArrayOutputStream bytes = new ByteArrayOutputStream();
        ObjectOutputStream out = new ObjectOutputStream(bytes)) {
      out.writeObject(s);
      out.flush();
      return bytes.toByteArray();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  /** A copy through Java serialization. */
  @SuppressWarnings("unchecked")
  public static <T extends Serializable> T copy(T s) {
    try (ObjectInputStream in = new ObjectInputStream(new ByteArrayInputStream(state(s)))) {
      return (T) in.readObject();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    } catch (ClassNotFoundException e) {
      throw new IllegalStateException(e);
    }
  }

  /**
   * Rows {@code [start, start + rows)} of the column-major n x d matrix x, fed through {@link BlockSummary#addBlock}
   * to a fresh summary of {@code factory} in blocks of the given sizes (each a fresh array, padding NaN).
   */
  public static <S extends BlockSummary<S>> S summarize(BlockSummary.Factory<S> factory, double[] x, int n, int d,
      int start, int rows, int[] sizes) {
    S s = factory.empty();
    MathFixtures.feed(MathFixtures.rows(x, n, d, start, rows), rows, d, sizes, 3, s::addBlock);
    return s;
  }

  /**
   * The summary of rows {@code [0, split)} merged with that of rows {@code [split, n)}, each made by a factory
   * that went through serialization (as executors receive it); checks that the right half is left unchanged.
   */
  public static <S extends BlockSummary<S>> S mergedHalves(BlockSummary.Factory<S> factory, double[] x, int n,
      int d, int split, int[] sizes) {
    S left = summarize(copy(factory), x, n, d, 0, split, sizes);
    S right = summarize(copy(factory), x, n, d, split, n - split, sizes);
    byte[] rightBefore = state(right);
    S merged = left.merge(right);
    assertArrayEquals(rightBefore, state(right), "merge changed the other side");
    return merged;
  }

  /**
   * Checks that empty merged with {@code s}, and {@code s} merged with empty, have the state of {@code s} bit for
   * bit, that the factory's empty summaries (fresh, and through serialization) are alike, and that a serialized
   * copy of {@code s} has its state. {@code s} is left as it was.
   */
  public static <S extends BlockSummary<S>> void assertEmptyIsTheIdentity(BlockSummary.Factory<S> factory, S s) {
    byte[] expected = state(s);
    assertArrayEquals(state(factory.empty()), state(copy(factory).empty()), "a serialized factory's empty");
    assertArrayEquals(expected, state(copy(s)), "a serialized copy");
    assertArrayEquals(expected, state(factory.empty().merge(s)), "empty merged with the summary");
    assertArrayEquals(expected, state(s), "empty merged with the summary changed the summary");
    assertArrayEquals(expected, state(s.merge(factory.empty())), "the summary merged with empty");
    assertArrayEquals(state(factory.empty()), state(factory.empty().merge(factory.empty())), "empty with empty");
  }
}
