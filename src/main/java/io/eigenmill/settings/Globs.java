package io.eigenmill.settings;

import java.util.List;
import java.util.regex.Pattern;
import java.util.stream.Collectors;

/** The globs of {@code features.columns} and {@code features.exclude}: {@code *} any run, {@code ?} one character. */
public final class Globs {
  private Globs() {}

  public static boolean isGlob(String pattern) {
    return pattern.indexOf('*') >= 0 || pattern.indexOf('?') >= 0;
  }

  /** A glob with * (any run of characters) and ? (one character); everything else literal. */
  public static Pattern regex(String glob) {
    return Pattern.compile(regexText(glob));
  }

  /** One regular expression (Java syntax, whole text) matching any of {@code globs}. */
  public static String anyOf(List<String> globs) {
    return "^(?:" + globs.stream().map(Globs::regexText).collect(Collectors.joining("|")) + ")$";
  }

  private static String regexText(String glob) {
    StringBuilder s = new StringBuilder();
    for (char c : glob.toCharArray()) {
      if (c == '*') {
        s.append(".*");
      } else if (c == '?') {
        s.append('.');
      } else {
        s.append(Pattern.quote(String.valueOf(c)));
      }
    }
    return s.toString();
  }
}
