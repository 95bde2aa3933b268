WITH `unit_level` AS (
  SELECT
    `select` AS `unit_id`,
    CAST(`order` AS STRING) AS `arm_label`,
    1 AS `arm_count`,
    `basketvalue` AS `raw_0`,
    CASE WHEN `returned` = TRUE THEN 1 ELSE 0 END AS `raw_1`
  FROM `shop`.`visitor_summary` AS `assignment_rows`
), `unit_values` AS (
  SELECT
    CASE WHEN `arm_count` = 1 THEN `arm_label` END AS `arm_label`,
    COALESCE(CAST(`raw_0` AS DOUBLE), 0.0) AS `v_0`,
    COALESCE(CAST(`raw_1` AS DOUBLE), 0.0) AS `v_1`
  FROM `unit_level`
), `arm_stats` AS (
  SELECT
    `arm_label`,
    CAST(COUNT(*) AS DOUBLE) AS `units`,
    CAST(COUNT(`v_0`) AS DOUBLE) AS `n_0`,
    SUM(`v_0`) AS `total_0`,
    AVG(`v_0`) AS `mean_0`,
    VARIANCE(`v_0`) AS `variance_0`,
    CAST(0 AS DOUBLE) AS `invalid_0`,
    CAST(COUNT(`v_1`) AS DOUBLE) AS `n_1`,
    SUM(`v_1`) AS `total_1`,
    AVG(`v_1`) AS `mean_1`,
    VARIANCE(`v_1`) AS `variance_1`,
    CAST(SUM(CASE WHEN `v_1` IS NULL OR `v_1` = 0 OR `v_1` = 1 THEN 0 ELSE 1 END) AS DOUBLE) AS `invalid_1`
  FROM `unit_values`
  GROUP BY
    `arm_label`
), `metric_list` AS (
  SELECT
    0 AS `metric_index`,
    'basket' AS `metric`,
    'mean' AS `kind`,
    'welch_t' AS `method`,
    CAST(NULL AS DOUBLE) AS `sigma`
  UNION ALL
  SELECT
    1 AS `metric_index`,
    'returned' AS `metric`,
    'proportion' AS `kind`,
    'two_proportion_z' AS `method`,
    CAST(NULL AS DOUBLE) AS `sigma`
), `per_arm` AS (
  SELECT
    `m`.`metric_index`,
    `m`.`metric`,
    `m`.`kind`,
    `m`.`method`,
    `m`.`sigma`,
    `s`.`arm_label` AS `arm`,
    `s`.`units`,
    CASE `m`.`metric_index` WHEN 0 THEN `s`.`n_0` WHEN 1 THEN `s`.`n_1` END AS `n`,
    CASE `m`.`metric_index` WHEN 0 THEN `s`.`total_0` WHEN 1 THEN `s`.`total_1` END AS `total`,
    CASE `m`.`metric_index` WHEN 0 THEN `s`.`mean_0` WHEN 1 THEN `s`.`mean_1` END AS `mean`,
    CASE `m`.`metric_index` WHEN 0 THEN `s`.`variance_0` WHEN 1 THEN `s`.`variance_1` END AS `variance`,
    CASE `m`.`metric_index` WHEN 0 THEN `s`.`invalid_0` WHEN 1 THEN `s`.`invalid_1` END AS `invalid`
  FROM `arm_stats` AS `s`
  CROSS JOIN `metric_list` AS `m`
), `with_control` AS (
  SELECT
    `metric_index`,
    `metric`,
    `kind`,
    `method`,
    `sigma`,
    `arm`,
    CASE WHEN `arm` = 'control' THEN 1 ELSE 0 END AS `is_control`,
    `units`,
    SUM(CASE WHEN `arm` IS NULL THEN `units` ELSE 0 END) OVER (PARTITION BY `metric_index`) AS `excluded_units`,
    `n`,
    `total`,
    `mean`,
    `variance`,
    `invalid`,
    MAX(CASE WHEN `arm` = 'control' THEN `n` END) OVER (PARTITION BY `metric_index`) AS `control_n`,
    MAX(CASE WHEN `arm` = 'control' THEN `total` END) OVER (PARTITION BY `metric_index`) AS `control_total`,
    MAX(CASE WHEN `arm` = 'control' THEN `mean` END) OVER (PARTITION BY `metric_index`) AS `control_mean`,
    MAX(CASE WHEN `arm` = 'control' THEN `variance` END) OVER (PARTITION BY `metric_index`) AS `control_variance`
  FROM `per_arm`
), `parts` AS (
  SELECT
    *,
    1.0 / NULLIF(`n`, 0) AS `inv_n`,
    1.0 / NULLIF(`control_n`, 0) AS `inv_control_n`,
    `variance` / NULLIF(`n`, 0) AS `var_of_mean`,
    `control_variance` / NULLIF(`control_n`, 0) AS `control_var_of_mean`,
    (
      `total` + `control_total`
    ) / NULLIF(`n` + `control_n`, 0) AS `pooled_mean`,
    (
      (
        `n` - 1
      ) * `variance` + (
        `control_n` - 1
      ) * `control_variance`
    ) / NULLIF(`n` + `control_n` - 2, 0) AS `pooled_variance`
  FROM `with_control`
  WHERE
    NOT `arm` IS NULL
), `compared` AS (
  SELECT
    *,
    CASE WHEN `is_control` = 0 THEN `mean` - `control_mean` END AS `difference`,
    CASE
      WHEN `is_control` = 1
      THEN NULL
      WHEN `method` = 'two_proportion_z'
      THEN SQRT(
        CASE
          WHEN `mean` * (
            1 - `mean`
          ) * `inv_n` + `control_mean` * (
            1 - `control_mean`
          ) * `inv_control_n` < 0
          THEN NULL
          ELSE `mean` * (
            1 - `mean`
          ) * `inv_n` + `control_mean` * (
            1 - `control_mean`
          ) * `inv_control_n`
        END
      )
      WHEN `method` = 'z_known_sigma'
      THEN `sigma` * SQRT(`inv_n` + `inv_control_n`)
      WHEN `method` = 'student_t'
      THEN SQRT(
        CASE
          WHEN `pooled_variance` * (
            `inv_n` + `inv_control_n`
          ) < 0
          THEN NULL
          ELSE `pooled_variance` * (
            `inv_n` + `inv_control_n`
          )
        END
      )
      ELSE SQRT(`var_of_mean` + `control_var_of_mean`)
    END AS `std_error`,
    CASE
      WHEN `is_control` = 1
      THEN NULL
      WHEN `method` = 'two_proportion_z'
      THEN SQRT(
        CASE
          WHEN `pooled_mean` * (
            1 - `pooled_mean`
          ) * (
            `inv_n` + `inv_control_n`
          ) < 0
          THEN NULL
          ELSE `pooled_mean` * (
            1 - `pooled_mean`
          ) * (
            `inv_n` + `inv_control_n`
          )
        END
      )
      WHEN `method` = 'z_known_sigma'
      THEN `sigma` * SQRT(`inv_n` + `inv_control_n`)
      WHEN `method` = 'student_t'
      THEN SQRT(
        CASE
          WHEN `pooled_variance` * (
            `inv_n` + `inv_control_n`
          ) < 0
          THEN NULL
          ELSE `pooled_variance` * (
            `inv_n` + `inv_control_n`
          )
        END
      )
      ELSE SQRT(`var_of_mean` + `control_var_of_mean`)
    END AS `null_std_error`,
    CASE
      WHEN `is_control` = 1
      THEN NULL
      WHEN `method` = 'welch_t'
      THEN (
        `var_of_mean` + `control_var_of_mean`
      ) * (
        `var_of_mean` + `control_var_of_mean`
      ) / NULLIF(
        `var_of_mean` * `var_of_mean` / NULLIF(`n` - 1, 0) + `control_var_of_mean` * `control_var_of_mean` / NULLIF(`control_n` - 1, 0),
        0
      )
      WHEN `method` = 'student_t'
      THEN NULLIF(`n` + `control_n` - 2, 0)
    END AS `df`
  FROM `parts`
)
SELECT
  `metric_index`,
  `metric`,
  `kind`,
  `method`,
  `arm`,
  `is_control`,
  `units`,
  `excluded_units`,
  `n`,
  `total`,
  `mean`,
  `variance`,
  `invalid`,
  `control_n`,
  `control_total`,
  `control_mean`,
  `control_variance`,
  `difference`,
  `std_error`,
  `null_std_error`,
  `difference` / NULLIF(`null_std_error`, 0) AS `statistic`,
  `df`
FROM `compared`
ORDER BY
  `metric_index` NULLS LAST,
  `is_control` DESC,
  `arm` NULLS LAST
