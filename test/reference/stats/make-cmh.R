# Reference values for cmhGeneralAssociation: R's mantelhaen.test (package stats) on 2 x W x K tables.
# Run from the repository root: Rscript test/reference/stats/make-cmh.R
set.seed(20261201)
cases <- list()
dims <- list(c(3, 2), c(4, 3), c(6, 5), c(8, 7), c(5, 4))
for (i in seq_along(dims)) {
  W <- dims[[i]][1]; K <- dims[[i]][2]
  rows <- matrix(sample(20:200, W * K, replace = TRUE), nrow = W)
  rate <- runif(K, 0.05, 0.4)
  shift <- if (i %% 2 == 0) seq(1, 0.5, length.out = W) else rep(1, W)
  events <- matrix(0, nrow = W, ncol = K)
  for (k in 1:K) for (w in 1:W) events[w, k] <- rbinom(1, rows[w, k], rate[k] * shift[w])
  x <- array(0, dim = c(2, W, K))
  x[1, , ] <- events
  x[2, , ] <- rows - events
  t <- mantelhaen.test(x)
  strata <- lapply(1:K, function(k) sprintf('{"events":[%s],"rows":[%s]}', paste(events[, k], collapse = ","), paste(rows[, k], collapse = ",")))
  cases[[i]] <- sprintf('{"strata":[%s],"statistic":%.17g,"df":%d,"p":%.17g}', paste(strata, collapse = ","), unname(t$statistic), as.integer(unname(t$parameter)), t$p.value)
}
writeLines(sprintf('{"source":"R %s stats::mantelhaen.test","cases":[%s]}', getRversion(), paste(cases, collapse = ",")), "test/reference/stats/cmh.json")
