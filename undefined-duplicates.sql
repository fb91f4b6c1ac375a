WITH counts AS (
  SELECT CAST("decision_id" AS VARCHAR) AS id, count(*) AS c FROM src WHERE "decision_id" IS NOT NULL GROUP BY 1 HAVING count(*) > 1
)
SELECT count(*)::DOUBLE AS ids, coalesce(sum(c), 0)::DOUBLE AS rows_in_duplicates, coalesce(max(c), 0)::DOUBLE AS max_copies, min(id, 5) AS example_ids FROM counts