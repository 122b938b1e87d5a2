package io.eigenmill.io;

import io.eigenmill.settings.Choices.Method;
import java.io.Serializable;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.HexFormat;
import java.util.List;

/**
 * Everything needed to apply a fitted PCA to new rows: the features in order with their input types, the means and
 * scales the fit used, the k retained loadings, all eigenvalues the method produced, the fit's row count and total
 * variance. Written to {@code model/} by a fit; read back by apply.
 *
 * @param method the fit's method (never {@code AUTO}: the one the plan chose); stored as its word
 * @param loadings column-major {@code d x k}
 * @param eigenvaluesComplete true when {@code eigenvalues} holds all d eigenvalues (covariance, TSQR)
 * @param sds the sample standard deviation of each feature in the fitted rows (original units)
 */
public record PcaModel(
    int formatVersion,
    String productVersion,
    List<String> features,
    List<String> featureTypes,
    String scaling,
    Method method,
    long rows,
    double[] means,
    double[] scales,
    int k,
    double[] loadings,
    double[] eigenvalues,
    boolean eigenvaluesComplete,
    double totalVariance,
    String schemaFingerprint,
    double[] sds) implements Serializable {

  /** The model format this version writes and reads; a model with a higher number is refused. */
  public static final int FORMAT_VERSION = 1;

  public int d() {
    return features.size();
  }

  public double loading(int j, int c) {
    return loadings[j + c * features.size()];
  }

  /**
   * SHA-256 (hex, first 16 bytes) of what the model computes with: features and types, scaling, method, row
   * count, means, scales, k, loadings, eigenvalues and total variance (the product version is left out). Two
   * models with the same fingerprint are the same fit, wherever they are stored.
   */
  public String contentFingerprint() {
    try {
      MessageDigest md = MessageDigest.getInstance("SHA-256");
      md.update((String.join("\n", features) + "\u0000" + String.join("\n", featureTypes) + "\u0000" + scaling
          + "\u0000" + method.word() + "\u0000" + rows + "\u0000" + k + "\u0000").getBytes(StandardCharsets.UTF_8));
      for (double[] a : new double[][] {means, scales, loadings, eigenvalues, {totalVariance}}) {
        java.nio.ByteBuffer b = java.nio.ByteBuffer.allocate(8 * a.length + 4);
        b.putInt(a.length);
        for (double v : a) {
          b.putDouble(v);
        }
        md.update(b.array());
      }
      return HexFormat.of().formatHex(md.digest(), 0, 16);
    } catch (NoSuchAlgorithmException e) {
      throw new IllegalStateException(e);
    }
  }

  /** SHA-256 (hex, first 16 bytes) of "name:type" of each feature in order. */
  public static String fingerprint(List<String> features, List<String> types) {
    try {
      MessageDigest md = MessageDigest.getInstance("SHA-256");
      for (int i = 0; i < features.size(); i++) {
        md.update((features.get(i) + ":" + types.get(i) + "\n").getBytes(StandardCharsets.UTF_8));
      }
      return HexFormat.of().formatHex(md.digest(), 0, 16);
    } catch (NoSuchAlgorithmException e) {
      throw new IllegalStateException(e);
    }
  }
}
