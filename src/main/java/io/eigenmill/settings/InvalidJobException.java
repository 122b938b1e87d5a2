package io.eigenmill.settings;

import java.util.List;

/**
 * A job that cannot run because of its settings or its input: every problem found, each one a sentence that names
 * the setting or column, the value, and the rule. The command line prints them all and exits with code 2.
 */
public final class InvalidJobException extends RuntimeException {
  private final List<String> problems;

  public InvalidJobException(List<String> problems) {
    super(String.join("\n", problems));
    if (problems.isEmpty()) {
      throw new IllegalArgumentException("an InvalidJobException needs at least one problem");
    }
    this.problems = List.copyOf(problems);
  }

  public InvalidJobException(String problem) {
    this(List.of(problem));
  }

  public List<String> problems() {
    return problems;
  }
}
