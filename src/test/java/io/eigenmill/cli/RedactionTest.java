package io.eigenmill.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;

/** Which keys are secret, and how their values are kept out of printed text (no Spark). */
class RedactionTest {
  @Test
  void credentialLikeKeysAreSecretWhateverTheirCaseOrSeparators() {
    for (String key : List.of("spark.hadoop.fs.s3a.secret.key", "spark.hadoop.fs.s3a.access.key",
        "fs.s3a.session.token", "spark.ssl.keyPassword", "DB_PASSWD", "spark.hadoop.fs.azure.account.key.fleet",
        "gcs.credentials.json", "ssh.private-key", "privateKey", "api_token", "my accessKey")) {
      assertTrue(Redaction.isSecret(key), key + " names a credential (the rule in Redaction's class comment)");
    }
    for (String key : List.of("spark.sql.shuffle.partitions", "spark.executor.memory", "input.path",
        "spark.hadoop.fs.s3a.endpoint", "spark.ssl.keyStoreType", "spark.kryo.registrator", "features.keys")) {
      assertFalse(Redaction.isSecret(key), key + " is not a credential");
    }
  }

  @Test
  void theRuleHandedToSparkAgreesWithIsSecret() {
    Pattern spark = Pattern.compile(Redaction.KEY_REGEX);
    for (String key : List.of("spark.hadoop.fs.s3a.secret.key", "x.Token", "spark.executor.memory", "a.b")) {
      assertEquals(Redaction.isSecret(key), spark.matcher(key).find(), key);
    }
  }

  @Test
  void redactMasksOnlySecretValuesAndKeepsTheOrder() {
    Map<String, String> conf = new LinkedHashMap<>();
    conf.put("spark.sql.shuffle.partitions", "8");
    conf.put("spark.hadoop.fs.s3a.secret.key", "wJalr/K7MDENG");
    conf.put("spark.hadoop.fs.s3a.endpoint", "http://127.0.0.1:9000");
    Map<String, String> shown = Redaction.redact(conf);
    assertEquals(List.of("spark.sql.shuffle.partitions", "spark.hadoop.fs.s3a.secret.key",
        "spark.hadoop.fs.s3a.endpoint"), List.copyOf(shown.keySet()));
    assertEquals("8", shown.get("spark.sql.shuffle.partitions"));
    assertEquals(Redaction.MASK, shown.get("spark.hadoop.fs.s3a.secret.key"));
    assertEquals("http://127.0.0.1:9000", shown.get("spark.hadoop.fs.s3a.endpoint"));
    assertEquals(Set.of("wJalr/K7MDENG"), Redaction.secretValues(conf));
  }

  @Test
  void secretValuesGivenWithSetAreFoundQuotedOrNot() {
    Set<String> values = Redaction.secretValuesOfSets(List.of(
        "spark.conf.\"spark.hadoop.fs.s3a.secret.key\"=\"abc/def+ghi\"",
        "spark.conf.\"fs.s3a.access.key\" = AKIAEXAMPLE",
        "reduce.components=3"));
    assertTrue(values.containsAll(List.of("abc/def+ghi", "AKIAEXAMPLE")), values.toString());
    assertFalse(values.contains("3"), "values of keys that are not secret are not collected");
  }

  @Test
  void scrubMasksEveryOccurrenceLongestFirstAndLeavesShortValues() {
    String text = "failed to reach bucket with key AKIAEXAMPLE and secret AKIAEXAMPLE-2 (retry AKIAEXAMPLE) on";
    String shown = Redaction.scrub(text, List.of("AKIAEXAMPLE", "AKIAEXAMPLE-2", "on"));
    assertFalse(shown.contains("AKIAEXAMPLE"), shown);
    assertEquals("failed to reach bucket with key " + Redaction.MASK + " and secret " + Redaction.MASK + " (retry "
        + Redaction.MASK + ") on", shown);
  }
}
