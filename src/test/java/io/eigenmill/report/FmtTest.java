package io.eigenmill.report;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.List;
import org.junit.jupiter.api.Test;

class FmtTest {

  @Test
  void countsHaveThousandsSeparators() {
    assertEquals("0", Fmt.count(0));
    assertEquals("999", Fmt.count(999));
    assertEquals("1,234,567", Fmt.count(1_234_567));
    assertEquals("-12,000", Fmt.count(-12_000));
  }

  @Test
  void numbersKeepFourSignificantDigits() {
    assertEquals("1,235", Fmt.num(1234.5678));
    assertEquals("0.01235", Fmt.num(0.0123456));
    assertEquals("12.5", Fmt.num(12.5));
    assertEquals("-0.5", Fmt.num(-0.5));
    assertEquals("52,000", Fmt.num(52_000.4));
    assertEquals("123,500,000", Fmt.num(123_456_789));
    assertEquals("0", Fmt.num(0.0));
  }

  @Test
  void tinyAndHugeNumbersUseExponents() {
    assertEquals("1.235e-7", Fmt.num(1.23456e-7));
    assertEquals("2.5e9", Fmt.num(2.5e9));
    assertEquals("-4e-5", Fmt.num(-4e-5));
    assertEquals("n/a", Fmt.num(Double.NaN));
    assertEquals("∞", Fmt.num(Double.POSITIVE_INFINITY));
  }

  @Test
  void percentagesAndDurations() {
    assertEquals("42.31%", Fmt.percent(0.4231, 2));
    assertEquals("99.0%", Fmt.percent(0.99, 1));
    assertEquals("0.42 s", Fmt.seconds(0.42));
    assertEquals("41.7 s", Fmt.seconds(41.7));
    assertEquals("4 min 05 s", Fmt.seconds(245));
    assertEquals("2 h 03 min", Fmt.seconds(7380));
    assertEquals("2026-03-01 00:05", Fmt.time(1_772_323_500, false));
    assertEquals("2026-03-01", Fmt.time(1_772_323_500, true));
  }

  @Test
  void fixedDecimalsNeverShowMinusZero() {
    assertEquals("0.00", Fmt.fixed(-0.001, 2));
    assertEquals("-0.35", Fmt.fixed(-0.3512, 2));
    assertEquals("3", Fmt.fixed(2.6, 0));
  }

  @Test
  void escapingCoversMarkupQuotesAndControlCharacters() {
    assertEquals("&lt;b&gt; &amp; &quot;x&quot; &#39;y&#39;", Html.esc("<b> & \"x\" 'y'"));
    assertEquals("a\uFFFDb", Html.esc("a\u0001b"));
    assertEquals("°C 😀", Html.esc("°C 😀"));
    assertEquals("\uFFFD", Html.esc("\uD800"));
    assertEquals("", Html.esc(null));
    assertEquals("abcdefghi…", Html.shorten("abcdefghijklmnop", 10));
  }

  @Test
  void linearTicksAreRoundAndCoverTheData() {
    Scale s = Scale.linear(0, 7.87, 300, 0);
    assertEquals(List.of(0.0, 2.0, 4.0, 6.0, 8.0), s.ticks());
    assertEquals(300, s.map(0), 1e-9);
    assertEquals(0, s.map(8), 1e-9);
    assertEquals("6", s.label(6));
    Scale shares = Scale.linear(-0.59, 0.59, 0, 100);
    assertEquals("-0.6", shares.label(-0.6));
  }

  @Test
  void logTicksAreDecades() {
    Scale s = Scale.log(3e-4, 812, 200, 0);
    assertEquals(1e-4, s.lo(), 1e-18);
    assertEquals(1e3, s.hi(), 1e-9);
    assertEquals(8, s.ticks().size());
    assertEquals("1e-4", s.label(1e-4));
    assertEquals("1,000", s.label(1000));
    assertEquals(100, s.map(Math.sqrt(1e-4 * 1e3)), 1e-9);
    assertEquals(true, Scale.spansDecades(new double[] {1e3, 0.5, 0}, 3));
    assertEquals(false, Scale.spansDecades(new double[] {1e3, 2, 0}, 3));
  }
}
