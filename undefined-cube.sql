WITH base AS (
  SELECT coalesce(CAST("region" AS VARCHAR), '(null)') AS s0, coalesce(CAST("device" AS VARCHAR), '(null)') AS s1, coalesce(CAST("tenure" AS VARCHAR), '(null)') AS s2, coalesce(CAST("promotion" AS VARCHAR), '(null)') AS a, coalesce(CAST("policy_version" AS VARCHAR), '(null)') AS v, coalesce(CAST(floor((epoch_us(CAST("logged_at" AS TIMESTAMP)) - 1772409600000000) / 86400000000) AS INTEGER), -1) AS b, TRY_CAST("propensity" AS DOUBLE) AS p, TRY_CAST("ordered" AS DOUBLE) AS r
  FROM src
),
by_p AS (
  SELECT s0, s1, s2, a, v, b, p, count(*)::DOUBLE AS c, count(rr)::DOUBLE AS c_r, coalesce(sum(rr), 0)::DOUBLE AS s_r, coalesce(sum(rr * rr), 0)::DOUBLE AS s_r2
  FROM (SELECT *, CASE WHEN (r IS NOT NULL AND isfinite(r)) THEN r END AS rr FROM base) GROUP BY s0, s1, s2, a, v, b, p
),
raw AS (
  SELECT s0, s1, s2, a, v, b,
    sum(c)::DOUBLE AS n,
    coalesce(sum(c) FILTER (WHERE p IS NULL), 0)::DOUBLE AS n_p_null,
    coalesce(sum(c) FILTER (WHERE isnan(p)), 0)::DOUBLE AS n_p_nan,
    coalesce(sum(c) FILTER (WHERE p <= 0), 0)::DOUBLE AS n_p_nonpos,
    coalesce(sum(c) FILTER (WHERE p > 1 AND NOT isnan(p)), 0)::DOUBLE AS n_p_above,
    coalesce(sum(c) FILTER (WHERE p = 1), 0)::DOUBLE AS n_p_one,
    coalesce(sum(c) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p)) AND p < CAST(0.01 AS DOUBLE)), 0)::DOUBLE AS n_p_floor,
    coalesce(sum(c - c_r), 0)::DOUBLE AS n_r_null,
    coalesce(sum(c) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS n_p,
    coalesce(sum(c / p) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS s_ip,
    coalesce(sum(c / (p * p)) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS s_ip2,
    min(p) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))) AS min_p,
    max(p) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))) AS max_p,
    coalesce(sum(c_r) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS n_rw,
    coalesce(sum(c_r / p) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS s_ip_rw,
    coalesce(sum(c_r / (p * p)) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS s_ip2_rw,
    coalesce(sum(s_r) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS s_r,
    coalesce(sum(s_r2) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS s_r2,
    coalesce(sum(s_r / p) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS s_rip,
    coalesce(sum(s_r / (p * p)) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS s_rip2,
    coalesce(sum(s_r2 / (p * p)) FILTER (WHERE (p > 0 AND p <= 1 AND NOT isnan(p))), 0)::DOUBLE AS s_r2ip2,
    coalesce(sum(c_r), 0)::DOUBLE AS n_rall,
    coalesce(sum(s_r), 0)::DOUBLE AS s_rall,
    coalesce(sum(s_r2), 0)::DOUBLE AS s_r2all
  FROM by_p GROUP BY s0, s1, s2, a, v, b
)
SELECT * FROM raw
ORDER BY s0, s1, s2, a, v, b