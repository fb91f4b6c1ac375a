# Two-proportion sample sizes and power from R's power.prop.test (stats package), default strict = FALSE,
# with a tight root-finding tolerance so the reference is good to ~1e-10.
# Run: Rscript test/reference/remedies/make-power.R > test/reference/remedies/power-prop.json
cases <- list(
  list(p1 = 0.10, p2 = 0.12, alpha = 0.05, power = 0.80),
  list(p1 = 0.129, p2 = 0.131, alpha = 0.05, power = 0.80),
  list(p1 = 0.50, p2 = 0.55, alpha = 0.01, power = 0.90),
  list(p1 = 0.02, p2 = 0.03, alpha = 0.05, power = 0.95),
  list(p1 = 0.30, p2 = 0.20, alpha = 0.10, power = 0.70),
  list(p1 = 0.85, p2 = 0.90, alpha = 0.05, power = 0.85)
)
rows <- sapply(cases, function(k) {
  n <- power.prop.test(p1 = k$p1, p2 = k$p2, sig.level = k$alpha, power = k$power, tol = 1e-12)$n
  pw <- power.prop.test(n = 1000, p1 = k$p1, p2 = k$p2, sig.level = k$alpha)$power
  sprintf('{"p1": %.17g, "p2": %.17g, "alpha": %.17g, "power": %.17g, "n": %.17g, "power_at_1000": %.17g}', k$p1, k$p2, k$alpha, k$power, n, pw)
})
cat(sprintf('{"source": "R %s, stats::power.prop.test", "cases": [%s]}\n', getRversion(), paste(rows, collapse = ", ")))
