# Reference values for app/core/stats/psis.ts from R's loo package (Debian r-cran-loo 2.5.1).
# Run from the repository root:  Rscript test/reference/psis/make-fixtures.R
# Writes test/reference/psis/fixtures.json. Numbers are printed with 17 significant digits so they
# round-trip exactly to IEEE doubles; a non-finite k-hat (too short or constant tail) is written as null.

suppressPackageStartupMessages(library(loo))
stopifnot(packageVersion("loo") == "2.5.1")

num <- function(x) {
  ifelse(is.finite(x), sprintf("%.17g", x), "null")
}
arr <- function(x) paste0("[", paste(num(x), collapse = ","), "]")
str <- function(s) paste0("\"", s, "\"")

make_case <- function(name, description, log_ratios) {
  fit <- suppressWarnings(psis(log_ratios, r_eff = 1))
  lw <- as.vector(weights(fit, log = TRUE, normalize = FALSE))
  paste0(
    "{",
    "\"name\":", str(name), ",",
    "\"description\":", str(description), ",",
    "\"S\":", length(log_ratios), ",",
    "\"paretoK\":", num(pareto_k_values(fit)), ",",
    "\"tailLength\":", attr(fit, "tail_len"), ",",
    "\"nEff\":", num(fit$diagnostics$n_eff), ",",
    "\"logRatios\":", arr(log_ratios), ",",
    "\"smoothedLogWeights\":", arr(lw),
    "}"
  )
}

# Each case draws its log ratios right after its own seed.
seeded <- function(seed, name, description, draw) {
  set.seed(seed)
  make_case(name, description, draw())
}
# Weights U^(-k), U ~ Uniform(0,1): a Pareto tail with shape k; log ratios -k log U.
pareto <- function(seed, k, S, description) {
  seeded(seed, paste0("pareto-", k), description, function() -k * log(runif(S)))
}

cases <- c(
  seeded(20240101, "lognormal-narrow", "log ratios ~ N(0, 0.3^2), S = 1000: near-normal, light tail",
    function() rnorm(1000, 0, 0.3)),
  seeded(20240102, "lognormal-wide", "log ratios ~ N(0, 1.5^2), S = 2000: log-normal weights with a long tail",
    function() rnorm(2000, 0, 1.5)),
  seeded(20240103, "student-t-target", "draws from N(0,1), target Student-t with 3 df: log ratio = log t3(x) - log N(x), S = 3000",
    function() { draws <- rnorm(3000); dt(draws, df = 3, log = TRUE) - dnorm(draws, log = TRUE) }),
  pareto(20240104, 0.3, 4000, "weights U^(-0.3), U ~ Uniform(0,1): Pareto tail with shape 0.3, S = 4000"),
  pareto(20240105, 0.7, 5000, "weights U^(-0.7): Pareto tail with shape 0.7, S = 5000"),
  pareto(20240106, 1.2, 20000, "weights U^(-1.2): Pareto tail with shape 1.2 (infinite mean), S = 20000"),
  seeded(20240107, "short-tail", "S = 20: tail length 4 < 5, so loo does not fit a Pareto tail (k-hat Inf)",
    function() rnorm(20)),
  make_case("constant", "S = 100 identical log ratios: loo cannot fit a constant tail (k-hat Inf)",
    rep(-1.25, 100))
)

# loo's own gpdfit test input (tests/testthat/test_gpdfit.R): set.seed(123); x <- rexp(100).
set.seed(123)
x <- rexp(100)
g_default <- loo:::gpdfit(x)
g_plain <- loo:::gpdfit(x, wip = FALSE, min_grid_pts = 80)
gpd <- paste0(
  "{",
  "\"x\":", arr(x), ",",
  "\"default\":{\"k\":", num(g_default$k), ",\"sigma\":", num(g_default$sigma), "},",
  "\"noPriorGrid80\":{\"k\":", num(g_plain$k), ",\"sigma\":", num(g_plain$sigma), "}",
  "}"
)

out <- paste0(
  "{",
  "\"source\":", str(paste0("R ", getRversion(), ", loo ", packageVersion("loo"),
                            ": loo::psis(log_ratios, r_eff = 1); weights(fit, log = TRUE, normalize = FALSE)")), ",",
  "\"gpdfit\":", gpd, ",",
  "\"cases\":[", paste(cases, collapse = ","), "]",
  "}"
)
path <- file.path("test", "reference", "psis", "fixtures.json")
writeLines(out, path)

# Round-trip check: every number read back equals what R computed.
back <- jsonlite::fromJSON(path)
stopifnot(identical(back$gpdfit$x, x))
stopifnot(identical(back$gpdfit$default$k, g_default$k))
cat("wrote", path, file.info(path)$size, "bytes\n")
