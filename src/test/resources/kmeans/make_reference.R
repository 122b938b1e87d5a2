# Reference k-means optima for the tests of io.eigenmill.kmeans (ReferenceKMeansTest): R's stats::kmeans,
# Hartigan-Wong, best of 200 starts, k = 2..5, on each open dataset of ../datasets, in two spaces:
#   features: the z-scores scale(x) (centre, divide by the n-1 standard deviation), i.e. prepare.scaling = standardize
#             with cluster.space = features;
#   scores:   the correlation-PCA scores prcomp(x, scale. = TRUE)$x[, 1:q] with q the smallest number of components
#             whose cumulative explained-variance ratio reaches 0.90 (reduce.variance-target), i.e. the default
#             cluster.space = scores after a standardized fit.
# Besides the best: its cluster sizes (descending), and how many of 200 single Hartigan-Wong starts reached it
# (within 1e-9 relative), the median and worst of those single starts.
# Run from the repository root:  Rscript src/test/resources/kmeans/make_reference.R > src/test/resources/kmeans/reference.json
datasets <- list(
  usarrests = list(csv = "usarrests.csv", drop = c("state")),
  wine = list(csv = "wine.csv", drop = c("class")),
  longley = list(csv = "longley.csv", drop = character(0))
)
dir <- "src/test/resources/datasets"
num <- function(x) formatC(x, digits = 17, format = "g")
arr <- function(v) paste0("[", paste(v, collapse = ", "), "]")
best_of <- function(x, k, seed) {
  set.seed(seed)
  fit <- kmeans(x, k, nstart = 200, iter.max = 100, algorithm = "Hartigan-Wong")
  set.seed(seed + 1)
  single <- vapply(1:200, function(i) suppressWarnings(
    kmeans(x, k, nstart = 1, iter.max = 100, algorithm = "Hartigan-Wong")$tot.withinss), 0.0)
  best <- min(fit$tot.withinss, single)
  list(best = fit$tot.withinss, sizes = sort(fit$size, decreasing = TRUE),
       at_best = sum(single <= best * (1 + 1e-9)), median = median(single), worst = max(single),
       single_min = min(single))
}
out <- c()
for (name in names(datasets)) {
  ds <- datasets[[name]]
  raw <- read.csv(file.path(dir, ds$csv), check.names = FALSE)
  x <- as.matrix(raw[, setdiff(colnames(raw), ds$drop)])
  z <- scale(x)
  pca <- prcomp(x, scale. = TRUE)
  ratio <- cumsum(pca$sdev^2) / sum(pca$sdev^2)
  q <- which(ratio >= 0.90 - 1e-12)[1]
  spaces <- list(features = z, scores = pca$x[, 1:q, drop = FALSE])
  blocks <- c()
  for (space in names(spaces)) {
    pts <- spaces[[space]]
    ks <- c()
    for (k in 2:5) {
      r <- best_of(pts, k, 20261203 + 100 * k)
      ks <- c(ks, sprintf(paste0('      "k=%d": {"best_tot_withinss": %s, "cluster_sizes": %s, ',
        '"single_starts_at_best": %d, "single_starts": 200, "single_median": %s, "single_worst": %s}'),
        k, num(r$best), arr(r$sizes), r$at_best, num(r$median), num(r$worst)))
      if (r$single_min < r$best * (1 - 1e-12)) stop(paste(name, space, k, "a single start beat nstart = 200"))
    }
    head <- sprintf('      "dimensions": %d, "total_ss": %s', ncol(pts), num(sum(scale(pts, scale = FALSE)^2)))
    blocks <- c(blocks, sprintf('    "%s": {\n%s,\n%s\n    }', space, head, paste(ks, collapse = ",\n")))
  }
  out <- c(out, sprintf('  "%s": {\n    "n": %d, "d": %d, "score_components": %d,\n%s\n  }', name, nrow(x), ncol(x),
    q, paste(blocks, collapse = ",\n")))
}
cat("{\n")
cat(sprintf('  "computed_by": "%s, stats::kmeans(algorithm = \\"Hartigan-Wong\\", nstart = 200, iter.max = 100), stats::prcomp, base::scale",\n',
  R.version.string))
cat(paste(out, collapse = ",\n"))
cat("\n}\n")
