# Reference values for the pooled two-proportion z-test in app/core/stats/ztest.ts from R's stats::prop.test
# without continuity correction, whose X-squared is z² and whose p-value is the two-sided normal p of z.
# (statsmodels is not installed on this machine.) Run from the repository root:
#   Rscript test/reference/stats/make-ztest.R
num <- function(x) sprintf("%.17g", x)
cases <- list(
  c(45, 100, 30, 100),
  c(120, 1000, 95, 1000),
  c(8, 50, 20, 60),
  c(1500, 20000, 1580, 20000),
  c(300, 400, 100, 400),
  c(0, 30, 3, 35)
)
rows <- vapply(cases, function(k) {
  t <- suppressWarnings(prop.test(c(k[1], k[3]), c(k[2], k[4]), correct = FALSE))
  sprintf("{\"x1\":%d,\"n1\":%d,\"x2\":%d,\"n2\":%d,\"chiSquare\":%s,\"pValue\":%s}",
          as.integer(k[1]), as.integer(k[2]), as.integer(k[3]), as.integer(k[4]),
          num(unname(t$statistic)), num(t$p.value))
}, character(1))
out <- sprintf("{\"source\":\"R %s stats::prop.test(x, n, correct = FALSE)\",\"cases\":[%s]}",
               getRversion(), paste(rows, collapse = ","))
writeLines(out, file.path("test", "reference", "stats", "ztest.json"))
cat("wrote test/reference/stats/ztest.json\n")
