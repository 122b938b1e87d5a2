package io.eigenmill.engine;

import java.io.Serializable;

/** One partition's (or a merged subtree's) read counts and aggregate. */
public record PartialResult<A extends Serializable>(ReadCounts counts, A value) implements Serializable {}
