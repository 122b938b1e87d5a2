package io.eigenmill.report;

/** Escaping of text for HTML and inline SVG, in element content and in quoted attribute values alike. */
final class Html {
  private Html() {}

  /**
   * Escapes {@code & < > " '}; drops control characters that HTML does not allow (keeping tab and newlines) and
   * lone surrogates, which would otherwise make the page invalid UTF-8. Null becomes the empty string.
   */
  static String esc(String s) {
    if (s == null) {
      return "";
    }
    StringBuilder b = new StringBuilder(s.length() + 16);
    for (int i = 0; i < s.length(); i++) {
      char c = s.charAt(i);
      switch (c) {
        case '&' -> b.append("&amp;");
        case '<' -> b.append("&lt;");
        case '>' -> b.append("&gt;");
        case '"' -> b.append("&quot;");
        case '\'' -> b.append("&#39;");
        default -> {
          if (Character.isHighSurrogate(c) && i + 1 < s.length() && Character.isLowSurrogate(s.charAt(i + 1))) {
            b.append(c).append(s.charAt(++i));
          } else if (Character.isSurrogate(c) || (c < 0x20 && c != '\t' && c != '\n' && c != '\r')
              || (c >= 0x7f && c < 0xa0)) {
            b.append('\uFFFD');
          } else {
            b.append(c);
          }
        }
      }
    }
    return b.toString();
  }

  /**
   * Shortens {@code s} to at most {@code max} characters with an ellipsis, for chart labels; the full text goes in
   * the element's title. Does not split a surrogate pair.
   */
  static String shorten(String s, int max) {
    if (s.codePointCount(0, s.length()) <= max) {
      return s;
    }
    int end = s.offsetByCodePoints(0, Math.max(1, max - 1));
    return s.substring(0, end) + "…";
  }
}
