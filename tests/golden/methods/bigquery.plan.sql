WITH `population` AS (
  SELECT
    `member_id` AS `unit_id`
  FROM `lab`.`assignments` AS `assignment_rows`
  GROUP BY
    `member_id`
), `unit_pre_period` AS (
  SELECT
    `member_id` AS `unit_id`,
    CASE WHEN COUNT(*) > 0 THEN 1 ELSE 0 END AS `raw_0`,
    COUNT(*) AS `raw_1`,
    SUM(CAST(`spend` AS FLOAT64)) AS `raw_2`,
    COUNT(*) AS `raw_3`
  FROM `lab`.`events` AS `pre_period_rows`
  WHERE
    `happened_on` >= CAST('2026-08-01' AS DATE)
    AND `happened_on` < CAST('2026-09-01' AS DATE)
  GROUP BY
    `member_id`
), `unit_values` AS (
  SELECT
    `p`.`unit_id`,
    CASE WHEN `r`.`unit_id` IS NULL THEN 1 ELSE 0 END AS `without_rows`,
    COALESCE(CAST(`r`.`raw_0` AS FLOAT64), 0.0) AS `v_0`,
    COALESCE(CAST(`r`.`raw_1` AS FLOAT64), 0.0) AS `v_1`,
    COALESCE(CAST(`r`.`raw_2` AS FLOAT64), 0.0) AS `v_2`,
    COALESCE(CAST(`r`.`raw_3` AS FLOAT64), 0.0) AS `v_3`
  FROM `population` AS `p`
  LEFT JOIN `unit_pre_period` AS `r`
    ON `p`.`unit_id` = `r`.`unit_id`
), `unit_centred` AS (
  SELECT
    `unit_id`,
    `without_rows`,
    `v_0`,
    `v_0` - AVG(`v_0`) OVER () AS `d_0`,
    `v_1`,
    `v_1` - AVG(`v_1`) OVER () AS `d_1`,
    `v_2`,
    `v_2` - AVG(`v_2`) OVER () AS `d_2`,
    `v_3`,
    `v_3` - AVG(`v_3`) OVER () AS `d_3`
  FROM `unit_values`
), `overall` AS (
  SELECT
    CAST(COUNT(*) AS FLOAT64) AS `population`,
    CAST(COUNT(*) - SUM(`without_rows`) AS FLOAT64) AS `units`,
    CAST(COUNT(`v_0`) AS FLOAT64) AS `n_0`,
    AVG(`v_0`) AS `mean_0`,
    (
      SUM(`d_0` * `d_0`) - SUM(`d_0`) * SUM(`d_0`) / NULLIF(CAST(COUNT(`d_0`) AS FLOAT64), 0)
    ) / NULLIF(CAST(COUNT(`d_0`) AS FLOAT64) - 1, 0) AS `variance_0`,
    CAST(COUNT(`v_1`) AS FLOAT64) AS `n_1`,
    AVG(`v_1`) AS `mean_1`,
    (
      SUM(`d_1` * `d_1`) - SUM(`d_1`) * SUM(`d_1`) / NULLIF(CAST(COUNT(`d_1`) AS FLOAT64), 0)
    ) / NULLIF(CAST(COUNT(`d_1`) AS FLOAT64) - 1, 0) AS `variance_1`,
    CAST(COUNT(`v_2`) AS FLOAT64) AS `n_2`,
    AVG(`v_2`) AS `mean_2`,
    (
      SUM(`d_2` * `d_2`) - SUM(`d_2`) * SUM(`d_2`) / NULLIF(CAST(COUNT(`d_2`) AS FLOAT64), 0)
    ) / NULLIF(CAST(COUNT(`d_2`) AS FLOAT64) - 1, 0) AS `variance_2`,
    CAST(COUNT(`v_3`) AS FLOAT64) AS `n_3`,
    AVG(`v_3`) AS `mean_3`,
    (
      SUM(`d_3` * `d_3`) - SUM(`d_3`) * SUM(`d_3`) / NULLIF(CAST(COUNT(`d_3`) AS FLOAT64), 0)
    ) / NULLIF(CAST(COUNT(`d_3`) AS FLOAT64) - 1, 0) AS `variance_3`,
    (
      SUM(`d_2` * `d_3`) - SUM(`d_2`) * SUM(`d_3`) / NULLIF(CAST(COUNT(`d_2` * `d_3`) AS FLOAT64), 0)
    ) / NULLIF(CAST(COUNT(`d_2` * `d_3`) AS FLOAT64) - 1, 0) AS `covariance_2_3`
  FROM `unit_centred`
), `metric_list` AS (
  SELECT
    0 AS `metric_index`,
    'active' AS `metric`,
    'proportion' AS `kind`
  UNION ALL
  SELECT
    1 AS `metric_index`,
    'visits' AS `metric`,
    'mean' AS `kind`
  UNION ALL
  SELECT
    2 AS `metric_index`,
    'spend_per_visit' AS `metric`,
    'ratio' AS `kind`
)
SELECT
  `m`.`metric_index`,
  `m`.`metric`,
  `m`.`kind`,
  `o`.`population`,
  `o`.`units`,
  CASE `m`.`metric_index`
    WHEN 0
    THEN `o`.`n_0`
    WHEN 1
    THEN `o`.`n_1`
    WHEN 2
    THEN `o`.`n_2`
  END AS `n`,
  CASE `m`.`metric_index`
    WHEN 0
    THEN `o`.`mean_0`
    WHEN 1
    THEN `o`.`mean_1`
    WHEN 2
    THEN `o`.`mean_2`
  END AS `mean`,
  CASE `m`.`metric_index`
    WHEN 0
    THEN `o`.`variance_0`
    WHEN 1
    THEN `o`.`variance_1`
    WHEN 2
    THEN `o`.`variance_2`
  END AS `variance`,
  CASE `m`.`metric_index` WHEN 2 THEN `o`.`mean_3` END AS `x_mean`,
  CASE `m`.`metric_index` WHEN 2 THEN `o`.`variance_3` END AS `x_variance`,
  CASE `m`.`metric_index` WHEN 2 THEN `o`.`covariance_2_3` END AS `xy_covariance`
FROM `overall` AS `o`
CROSS JOIN `metric_list` AS `m`
ORDER BY
  `m`.`metric_index` NULLS LAST
