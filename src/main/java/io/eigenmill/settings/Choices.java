package io.eigenmill.settings;

/** The closed sets of words the job file accepts. Each constant's {@code word} is how it is spelled in HOCON. */
public final class Choices {
  private Choices() {}

  /** A word from the job file that maps to one constant. */
  public interface Word {
    String word();
  }

  public enum InputFormat implements Word {
    PARQUET("parquet"), CSV("csv");
    private final String word;
    InputFormat(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  public enum CorruptFiles implements Word {
    FAIL("fail"), SKIP("skip");
    private final String word;
    CorruptFiles(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  public enum Scaling implements Word {
    NONE("none"), STANDARDIZE("standardize");
    private final String word;
    Scaling(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  public enum MissingPolicy implements Word {
    DROP_ROWS("drop-rows"), IMPUTE_MEAN("impute-mean"), FAIL("fail");
    private final String word;
    MissingPolicy(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  public enum Method implements Word {
    AUTO("auto"), COVARIANCE("covariance"), TSQR("tsqr"), RANDOMIZED("randomized");
    private final String word;
    Method(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  public enum OutputMode implements Word {
    FAIL_IF_EXISTS("fail-if-exists"), OVERWRITE("overwrite");
    private final String word;
    OutputMode(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  /** How the row outputs' catalog tables are written ({@code output.table-mode}). */
  public enum TableMode implements Word {
    APPEND("append"), OVERWRITE_PARTITIONS("overwrite-partitions"), FAIL_IF_EXISTS("fail-if-exists");
    private final String word;
    TableMode(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  public enum ClusterSpace implements Word {
    SCORES("scores"), FEATURES("features");
    private final String word;
    ClusterSpace(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  public enum KSelection implements Word {
    SILHOUETTE("silhouette"), CALINSKI_HARABASZ("calinski-harabasz"), DAVIES_BOULDIN("davies-bouldin");
    private final String word;
    KSelection(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  /** {@code monitor.q-limit}: Jackson and Mudholkar (1979), Box (1954), or chosen from h0 (ControlLimits). */
  public enum QLimit implements Word {
    JACKSON_MUDHOLKAR("jackson-mudholkar"), BOX("box"), AUTO("auto");
    private final String word;
    QLimit(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  /** {@code apply.unknown-group}: what a row of a group the model has no model for gets. */
  public enum UnknownGroup implements Word {
    FAIL("fail"), SKIP("skip"), FLAG("flag");
    private final String word;
    UnknownGroup(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  public enum InputLayout implements Word {
    WIDE("wide"), LONG("long");
    private final String word;
    InputLayout(String word) { this.word = word; }
    @Override public String word() { return word; }
  }

  /** How the values of one metric in one entity's time bucket become a cell ({@code input.long.aggregate}). */
  public enum Aggregate implements Word {
    MEAN("mean"), LAST("last"), MAX("max"), MIN("min"), SUM("sum");
    private final String word;
    Aggregate(String word) { this.word = word; }
    @Override public String word() { return word; }
  }
}
