WITH `assigned_units` AS (
  SELECT
    `member_id` AS `unit_id`,
    MIN(CAST(`arm` AS CHAR)) AS `arm_label`,
    MAX(CAST(`arm` AS CHAR)) AS `arm_label_last`
  FROM `lab`.`assignments` AS `assignment_rows`
  GROUP BY
    `member_id`
), `unit_events` AS (
  SELECT
    `member_id` AS `unit_id`,
    SUM(CAST(`amount` AS DOUBLE)) AS `raw_0`,
    CASE WHEN COUNT(*) > 0 THEN 1 ELSE 0 END AS `raw_1`,
    SUM(CAST(`amount` AS DOUBLE)) AS `raw_2`,
    COUNT(*) AS `raw_3`
  FROM `lab`.`events` AS `event_rows`
  GROUP BY
    `member_id`
), `unit_joined` AS (
  SELECT
    `a`.`unit_id`,
    `a`.`arm_label`,
    `a`.`arm_label_last`,
    `e`.`raw_0`,
    `e`.`raw_1`,
    `e`.`raw_2`,
    `e`.`raw_3`
  FROM `assigned_units` AS `a`
  LEFT JOIN `unit_events` AS `e`
    ON `a`.`unit_id` = `e`.`unit_id`
), `unit_values` AS (
  SELECT
    CASE WHEN `arm_label` = `arm_label_last` THEN `arm_label` END AS `arm_label`,
    COALESCE(CAST(`raw_0` AS DOUBLE), 0.0) AS `v_0`,
    COALESCE(CAST(`raw_1` AS DOUBLE), 0.0) AS `v_1`,
    COALESCE(CAST(`raw_2` AS DOUBLE), 0.0) AS `v_2`,
    COALESCE(CAST(`raw_3` AS DOUBLE), 0.0) AS `v_3`
  FROM `unit_joined`
), `arm_stats` AS (
  SELECT
    `arm_label`,
    0 AS `segment_index`,
    CAST(NULL AS CHAR) AS `segment`,
    '(all)' AS `segment_value`,
    CAST(COUNT(*) AS DOUBLE) AS `units`,
    CAST(COUNT(`v_0`) AS DOUBLE) AS `n_0`,
    AVG(`v_0`) AS `mean_0`,
    VAR_SAMP(`v_0`) AS `variance_0`,
    CAST(COUNT(`v_1`) AS DOUBLE) AS `n_1`,
    AVG(`v_1`) AS `mean_1`,
    VAR_SAMP(`v_1`) AS `variance_1`,
    CAST(SUM(CASE WHEN `v_1` IS NULL OR `v_1` = 0 OR `v_1` = 1 THEN 0 ELSE 1 END) AS DOUBLE) AS `invalid_1`,
    CAST(COUNT(`v_2`) AS DOUBLE) AS `n_2`,
    AVG(`v_2`) AS `mean_2`,
    VAR_SAMP(`v_2`) AS `variance_2`,
    CAST(COUNT(`v_3`) AS DOUBLE) AS `n_3`,
    AVG(`v_3`) AS `mean_3`,
    VAR_SAMP(`v_3`) AS `variance_3`,
    (
      VAR_SAMP(`v_2` + `v_3`) - VAR_SAMP(`v_2`) - VAR_SAMP(`v_3`)
    ) / 2 AS `covariance_2_3`
  FROM `unit_values`
  GROUP BY
    `arm_label`
), `metric_list` AS (
  SELECT
    0 AS `metric_index`,
    'spend' AS `metric`,
    'mean' AS `kind`,
    'primary' AS `role`,
    'welch_t' AS `method`,
    CAST(NULL AS DOUBLE) AS `sigma`,
    'higher' AS `direction`,
    CAST(NULL AS DOUBLE) AS `margin`,
    CAST(NULL AS DOUBLE) AS `relative_margin`,
    CAST(NULL AS DOUBLE) AS `target`
  UNION ALL
  SELECT
    1 AS `metric_index`,
    'bought' AS `metric`,
    'proportion' AS `kind`,
    'guardrail' AS `role`,
    'two_proportion_z' AS `method`,
    CAST(NULL AS DOUBLE) AS `sigma`,
    'higher' AS `direction`,
    CAST(NULL AS DOUBLE) AS `margin`,
    CAST(0.05 AS DOUBLE) AS `relative_margin`,
    CAST(NULL AS DOUBLE) AS `target`
  UNION ALL
  SELECT
    2 AS `metric_index`,
    'spend_per_event' AS `metric`,
    'ratio' AS `kind`,
    'secondary' AS `role`,
    'ratio_delta_z' AS `method`,
    CAST(NULL AS DOUBLE) AS `sigma`,
    CAST(NULL AS CHAR) AS `direction`,
    CAST(NULL AS DOUBLE) AS `margin`,
    CAST(NULL AS DOUBLE) AS `relative_margin`,
    CAST(NULL AS DOUBLE) AS `target`
), `per_arm` AS (
  SELECT
    `m`.`metric_index`,
    `m`.`metric`,
    `m`.`kind`,
    `m`.`role`,
    `m`.`method`,
    `m`.`sigma`,
    `m`.`direction`,
    `m`.`margin`,
    `m`.`relative_margin`,
    `m`.`target`,
    `s`.`segment_index`,
    `s`.`segment`,
    `s`.`segment_value`,
    `s`.`arm_label` AS `arm`,
    `s`.`units`,
    CASE `m`.`metric_index`
      WHEN 0
      THEN `s`.`n_0`
      WHEN 1
      THEN `s`.`n_1`
      WHEN 2
      THEN `s`.`n_2`
    END AS `n`,
    CASE `m`.`metric_index`
      WHEN 0
      THEN `s`.`mean_0` * `s`.`n_0`
      WHEN 1
      THEN `s`.`mean_1` * `s`.`n_1`
      WHEN 2
      THEN `s`.`mean_2` * `s`.`n_2`
    END AS `total`,
    CASE `m`.`metric_index`
      WHEN 0
      THEN `s`.`mean_0`
      WHEN 1
      THEN `s`.`mean_1`
      WHEN 2
      THEN `s`.`mean_2`
    END AS `mean`,
    CASE `m`.`metric_index`
      WHEN 0
      THEN `s`.`variance_0`
      WHEN 1
      THEN `s`.`variance_1`
      WHEN 2
      THEN `s`.`variance_2`
    END AS `variance`,
    CASE `m`.`metric_index`
      WHEN 0
      THEN CAST(0 AS DOUBLE)
      WHEN 1
      THEN `s`.`invalid_1`
      WHEN 2
      THEN CAST(0 AS DOUBLE)
    END AS `invalid`,
    CASE `m`.`metric_index` WHEN 2 THEN `s`.`n_3` END AS `x_n`,
    CASE `m`.`metric_index` WHEN 2 THEN `s`.`mean_3` * `s`.`n_3` END AS `x_total`,
    CASE `m`.`metric_index` WHEN 2 THEN `s`.`mean_3` END AS `x_mean`,
    CASE `m`.`metric_index` WHEN 2 THEN `s`.`variance_3` END AS `x_variance`,
    CASE `m`.`metric_index` WHEN 2 THEN `s`.`covariance_2_3` END AS `xy_covariance`
  FROM `arm_stats` AS `s`
  CROSS JOIN `metric_list` AS `m`
), `with_control` AS (
  SELECT
    `metric_index`,
    `metric`,
    `kind`,
    `role`,
    `method`,
    `sigma`,
    `direction`,
    `margin`,
    `relative_margin`,
    `target`,
    `segment_index`,
    `segment`,
    `segment_value`,
    `arm`,
    CASE WHEN `arm` = 'control' THEN 1 ELSE 0 END AS `is_control`,
    `units`,
    SUM(CASE WHEN `arm` IS NULL THEN `units` ELSE 0 END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `excluded_units`,
    `n`,
    `total`,
    `mean`,
    `variance`,
    `invalid`,
    `x_n`,
    `x_total`,
    `x_mean`,
    `x_variance`,
    `xy_covariance`,
    MAX(CASE WHEN `arm` = 'control' THEN `n` END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `control_n`,
    MAX(CASE WHEN `arm` = 'control' THEN `total` END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `control_total`,
    MAX(CASE WHEN `arm` = 'control' THEN `mean` END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `control_mean`,
    MAX(CASE WHEN `arm` = 'control' THEN `variance` END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `control_variance`,
    MAX(CASE WHEN `arm` = 'control' THEN `x_n` END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `control_x_n`,
    MAX(CASE WHEN `arm` = 'control' THEN `x_total` END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `control_x_total`,
    MAX(CASE WHEN `arm` = 'control' THEN `x_mean` END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `control_x_mean`,
    MAX(CASE WHEN `arm` = 'control' THEN `x_variance` END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `control_x_variance`,
    MAX(CASE WHEN `arm` = 'control' THEN `xy_covariance` END) OVER (PARTITION BY `metric_index`, `segment_index`, `segment_value`) AS `control_xy_covariance`
  FROM `per_arm`
), `arm_values` AS (
  SELECT
    *,
    1.0 / NULLIF(`n`, 0) AS `inv_n`,
    1.0 / NULLIF(`control_n`, 0) AS `inv_control_n`,
    CASE WHEN `kind` = 'ratio' THEN `total` / NULLIF(`x_total`, 0) ELSE `mean` END AS `value`,
    CASE
      WHEN `kind` = 'ratio'
      THEN `control_total` / NULLIF(`control_x_total`, 0)
      ELSE `control_mean`
    END AS `control_value`,
    CASE
      WHEN `kind` = 'ratio'
      THEN (
        `n` - 1
      ) * (
        `variance` - 2 * (
          `total` / NULLIF(`x_total`, 0)
        ) * `xy_covariance` + (
          `total` / NULLIF(`x_total`, 0)
        ) * (
          `total` / NULLIF(`x_total`, 0)
        ) * `x_variance`
      ) / NULLIF(`x_total` * `x_total`, 0)
      ELSE `variance` / NULLIF(`n`, 0)
    END AS `value_variance`,
    CASE
      WHEN `kind` = 'ratio'
      THEN (
        `control_n` - 1
      ) * (
        `control_variance` - 2 * (
          `control_total` / NULLIF(`control_x_total`, 0)
        ) * `control_xy_covariance` + (
          `control_total` / NULLIF(`control_x_total`, 0)
        ) * (
          `control_total` / NULLIF(`control_x_total`, 0)
        ) * `control_x_variance`
      ) / NULLIF(`control_x_total` * `control_x_total`, 0)
      ELSE `control_variance` / NULLIF(`control_n`, 0)
    END AS `control_value_variance`,
    (
      `total` + `control_total`
    ) / NULLIF(`n` + `control_n`, 0) AS `pooled_mean`,
    (
      (
        `n` - 1
      ) * `variance` + (
        `control_n` - 1
      ) * `control_variance`
    ) / NULLIF(`n` + `control_n` - 2, 0) AS `pooled_variance`,
    CASE
      WHEN `method` = 'cuped_welch_t'
      THEN (
        (
          `n` - 1
        ) * `xy_covariance` + (
          `control_n` - 1
        ) * `control_xy_covariance`
      ) / NULLIF((
        `n` - 1
      ) * `x_variance` + (
        `control_n` - 1
      ) * `control_x_variance`, 0)
    END AS `theta`,
    CASE
      WHEN `method` = 'cuped_welch_t'
      THEN COALESCE(`xy_covariance` / NULLIF(`x_variance`, 0), 0)
    END AS `arm_theta`,
    CASE
      WHEN `method` = 'cuped_welch_t'
      THEN COALESCE(`control_xy_covariance` / NULLIF(`control_x_variance`, 0), 0)
    END AS `control_arm_theta`,
    CASE
      WHEN `method` = 'cuped_welch_t'
      THEN (
        `n` * `x_mean` + `control_n` * `control_x_mean`
      ) / NULLIF(`n` + `control_n`, 0)
    END AS `pooled_x_mean`
  FROM `with_control`
  WHERE
    NOT `arm` IS NULL
), `adjusted` AS (
  SELECT
    *,
    CASE
      WHEN `method` = 'cuped_welch_t'
      THEN (
        `n` - 1
      ) * (
        `variance` - `arm_theta` * `xy_covariance`
      ) / NULLIF(`n` - 2, 0) * (
        `inv_n` + CASE
          WHEN `x_variance` > 0
          THEN (
            `x_mean` - `pooled_x_mean`
          ) * (
            `x_mean` - `pooled_x_mean`
          ) / (
            (
              `n` - 1
            ) * `x_variance`
          )
          ELSE 0
        END
      )
    END AS `adjusted_variance_of_mean`,
    CASE
      WHEN `method` = 'cuped_welch_t'
      THEN (
        `control_n` - 1
      ) * (
        `control_variance` - `control_arm_theta` * `control_xy_covariance`
      ) / NULLIF(`control_n` - 2, 0) * (
        `inv_control_n` + CASE
          WHEN `control_x_variance` > 0
          THEN (
            `control_x_mean` - `pooled_x_mean`
          ) * (
            `control_x_mean` - `pooled_x_mean`
          ) / (
            (
              `control_n` - 1
            ) * `control_x_variance`
          )
          ELSE 0
        END
      )
    END AS `control_adjusted_variance_of_mean`
  FROM `arm_values`
), `compared` AS (
  SELECT
    *,
    CASE WHEN `is_control` = 0 THEN `value` - `control_value` END AS `difference`,
    CASE
      WHEN `is_control` = 1
      THEN NULL
      WHEN `method` = 'cuped_welch_t'
      THEN (
        `mean` - `arm_theta` * (
          `x_mean` - `pooled_x_mean`
        )
      ) - (
        `control_mean` - `control_arm_theta` * (
          `control_x_mean` - `pooled_x_mean`
        )
      )
      ELSE `value` - `control_value`
    END AS `estimate`,
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
      WHEN `method` = 'cuped_welch_t'
      THEN SQRT(
        CASE
          WHEN `adjusted_variance_of_mean` + `control_adjusted_variance_of_mean` < 0
          THEN NULL
          ELSE `adjusted_variance_of_mean` + `control_adjusted_variance_of_mean`
        END
      )
      ELSE SQRT(
        CASE
          WHEN `value_variance` + `control_value_variance` < 0
          THEN NULL
          ELSE `value_variance` + `control_value_variance`
        END
      )
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
      WHEN `method` = 'cuped_welch_t'
      THEN SQRT(
        CASE
          WHEN `adjusted_variance_of_mean` + `control_adjusted_variance_of_mean` < 0
          THEN NULL
          ELSE `adjusted_variance_of_mean` + `control_adjusted_variance_of_mean`
        END
      )
      ELSE SQRT(
        CASE
          WHEN `value_variance` + `control_value_variance` < 0
          THEN NULL
          ELSE `value_variance` + `control_value_variance`
        END
      )
    END AS `null_std_error`,
    CASE
      WHEN `is_control` = 1
      THEN NULL
      WHEN `method` = 'welch_t'
      THEN (
        `value_variance` + `control_value_variance`
      ) * (
        `value_variance` + `control_value_variance`
      ) / NULLIF(
        `value_variance` * `value_variance` / NULLIF(`n` - 1, 0) + `control_value_variance` * `control_value_variance` / NULLIF(`control_n` - 1, 0),
        0
      )
      WHEN `method` = 'cuped_welch_t'
      THEN (
        `adjusted_variance_of_mean` + `control_adjusted_variance_of_mean`
      ) * (
        `adjusted_variance_of_mean` + `control_adjusted_variance_of_mean`
      ) / NULLIF(
        `adjusted_variance_of_mean` * `adjusted_variance_of_mean` / NULLIF(`n` - 2, 0) + `control_adjusted_variance_of_mean` * `control_adjusted_variance_of_mean` / NULLIF(`control_n` - 2, 0),
        0
      )
      WHEN `method` = 'student_t'
      THEN NULLIF(`n` + `control_n` - 2, 0)
    END AS `df`,
    CASE
      WHEN `method` = 'cuped_welch_t' AND `is_control` = 0
      THEN 1 - (
        `adjusted_variance_of_mean` + `control_adjusted_variance_of_mean`
      ) / NULLIF(`variance` / NULLIF(`n`, 0) + `control_variance` / NULLIF(`control_n`, 0), 0)
    END AS `variance_reduction`,
    CASE
      WHEN `target` IS NULL
      THEN NULL
      WHEN `kind` = 'proportion'
      THEN (
        `value` - `target`
      ) / NULLIF(SQRT(`target` * (
        1 - `target`
      ) * `inv_n`), 0)
      ELSE (
        `value` - `target`
      ) / NULLIF(SQRT(CASE WHEN `value_variance` < 0 THEN NULL ELSE `value_variance` END), 0)
    END AS `target_statistic`,
    CASE WHEN NOT `target` IS NULL AND `kind` = 'mean' THEN `n` - 1 END AS `target_df`
  FROM `adjusted`
), `lift_terms` AS (
  SELECT
    *,
    CASE
      WHEN `method` = 'two_proportion_z'
      THEN `control_mean` * (
        1 - `control_mean`
      ) * `inv_control_n`
      WHEN `method` = 'z_known_sigma'
      THEN `sigma` * `sigma` * `inv_control_n`
      WHEN `method` = 'student_t'
      THEN `pooled_variance` * `inv_control_n`
      ELSE `control_value_variance`
    END AS `lift_control_variance`,
    CASE
      WHEN `method` = 'cuped_welch_t'
      THEN (
        `control_variance` - (
          `control_arm_theta` + (
            `arm_theta` - `control_arm_theta`
          ) * `control_n` / NULLIF(`n` + `control_n`, 0)
        ) * `control_xy_covariance`
      ) * `inv_control_n`
    END AS `cuped_control_covariance`
  FROM `compared`
), `lifted` AS (
  SELECT
    *,
    `estimate` / NULLIF(`control_value`, 0) AS `relative_lift`,
    SQRT(
      CASE
        WHEN `std_error` * `std_error` / NULLIF(`control_value` * `control_value`, 0) + `estimate` * `estimate` * `lift_control_variance` / NULLIF(`control_value` * `control_value` * `control_value` * `control_value`, 0) + 2 * `estimate` * CASE
          WHEN `method` = 'cuped_welch_t'
          THEN `cuped_control_covariance`
          ELSE `lift_control_variance`
        END / NULLIF(`control_value` * `control_value` * `control_value`, 0) < 0
        THEN NULL
        ELSE `std_error` * `std_error` / NULLIF(`control_value` * `control_value`, 0) + `estimate` * `estimate` * `lift_control_variance` / NULLIF(`control_value` * `control_value` * `control_value` * `control_value`, 0) + 2 * `estimate` * CASE
          WHEN `method` = 'cuped_welch_t'
          THEN `cuped_control_covariance`
          ELSE `lift_control_variance`
        END / NULLIF(`control_value` * `control_value` * `control_value`, 0)
      END
    ) AS `lift_std_error`
  FROM `lift_terms`
), `sequential` AS (
  SELECT
    *,
    0.05 * 0.05 * `control_value` * `control_value` AS `mixing_variance`,
    `std_error` * `std_error` AS `sequential_variance`
  FROM `lifted`
), `monitored` AS (
  SELECT
    *,
    CASE
      WHEN `sequential_variance` > 0 AND `mixing_variance` > 0
      THEN 0.5 * LN(`sequential_variance` / (
        `sequential_variance` + `mixing_variance`
      )) + `mixing_variance` * `estimate` * `estimate` / (
        2 * `sequential_variance` * (
          `sequential_variance` + `mixing_variance`
        )
      )
    END AS `log_likelihood_ratio`,
    CASE
      WHEN `sequential_variance` > 0 AND `mixing_variance` > 0
      THEN SQRT(
        `sequential_variance` * (
          `sequential_variance` + `mixing_variance`
        ) / `mixing_variance` * (
          2 * LN(1 / 0.05) + LN((
            `sequential_variance` + `mixing_variance`
          ) / `sequential_variance`)
        )
      )
    END AS `sequence_half_width`
  FROM `sequential`
), `monitored_p` AS (
  SELECT
    *,
    CASE
      WHEN `log_likelihood_ratio` IS NULL
      THEN NULL
      WHEN `log_likelihood_ratio` <= 0
      THEN 1.0
      WHEN `log_likelihood_ratio` > 700
      THEN 0.0
      ELSE EXP(-`log_likelihood_ratio`)
    END AS `sequential_p_value`
  FROM `monitored`
), `result` AS (
  SELECT
    `metric_index`,
    `metric`,
    `kind`,
    `role`,
    `method`,
    `segment_index`,
    `segment`,
    `segment_value`,
    `arm`,
    `is_control`,
    `units`,
    `excluded_units`,
    `n`,
    `total`,
    `mean`,
    `variance`,
    `invalid`,
    `x_n`,
    `x_total`,
    `x_mean`,
    `x_variance`,
    `xy_covariance`,
    `value`,
    SQRT(`value_variance`) AS `value_std_error`,
    `control_n`,
    `control_total`,
    `control_mean`,
    `control_variance`,
    `control_value`,
    SQRT(`control_value_variance`) AS `control_value_std_error`,
    `difference`,
    `estimate`,
    `std_error`,
    `null_std_error`,
    `estimate` / NULLIF(`null_std_error`, 0) AS `statistic`,
    `df`,
    `theta`,
    `variance_reduction`,
    `relative_lift`,
    `lift_std_error`,
    `direction`,
    `margin`,
    `relative_margin`,
    CASE
      WHEN `is_control` = 1
      THEN NULL
      WHEN NOT `margin` IS NULL AND `direction` = 'higher'
      THEN (
        `estimate` + `margin`
      ) / NULLIF(`std_error`, 0)
      WHEN NOT `margin` IS NULL AND `direction` = 'lower'
      THEN (
        `margin` - `estimate`
      ) / NULLIF(`std_error`, 0)
      WHEN NOT `relative_margin` IS NULL AND `direction` = 'higher'
      THEN (
        `relative_lift` + `relative_margin`
      ) / NULLIF(`lift_std_error`, 0)
      WHEN NOT `relative_margin` IS NULL AND `direction` = 'lower'
      THEN (
        `relative_margin` - `relative_lift`
      ) / NULLIF(`lift_std_error`, 0)
    END AS `margin_statistic`,
    `target`,
    `target_statistic`,
    `target_df`,
    `arm_theta` AS `theta_treatment`,
    `control_arm_theta` AS `theta_control`,
    `sequential_p_value` AS `always_valid_p_value`,
    `estimate` - `sequence_half_width` AS `sequence_low`,
    `estimate` + `sequence_half_width` AS `sequence_high`
  FROM `monitored_p`
), `srm_rows` AS (
  SELECT
    `s`.*,
    CASE
      WHEN `s`.`segment_index` = 0
      AND `s`.`metric_index` = 0
      AND `s`.`arm` IN ('control', 'treatment', 'variant_b')
      THEN CAST(`s`.`units` AS DOUBLE)
    END AS `srm_units`,
    CASE
      WHEN `s`.`segment_index` = 0
      AND `s`.`metric_index` = 0
      AND `s`.`arm` IN ('control', 'treatment', 'variant_b')
      THEN CASE `s`.`arm`
        WHEN 'control'
        THEN CAST(1.0 AS DOUBLE)
        WHEN 'treatment'
        THEN CAST(1.0 AS DOUBLE)
        WHEN 'variant_b'
        THEN CAST(1.0 AS DOUBLE)
      END
    END AS `srm_weight`
  FROM `result` AS `s`
), `srm_sums` AS (
  SELECT
    *,
    SUM(`srm_units`) OVER () AS `srm_total`,
    SUM(`srm_weight`) OVER () AS `srm_present_weight`,
    COUNT(`srm_units`) OVER () AS `srm_present_arms`
  FROM `srm_rows`
), `srm_terms` AS (
  SELECT
    *,
    (
      `srm_units` - `srm_total` * `srm_weight` / CAST(1.0 + 1.0 + 1.0 AS DOUBLE)
    ) * (
      `srm_units` - `srm_total` * `srm_weight` / CAST(1.0 + 1.0 + 1.0 AS DOUBLE)
    ) / NULLIF(`srm_total` * `srm_weight` / CAST(1.0 + 1.0 + 1.0 AS DOUBLE), 0) AS `srm_term`
  FROM `srm_sums`
), `srm_statistic` AS (
  SELECT
    *,
    SUM(`srm_term`) OVER () + `srm_total` * (
      CAST(1.0 + 1.0 + 1.0 AS DOUBLE) - `srm_present_weight`
    ) / CAST(1.0 + 1.0 + 1.0 AS DOUBLE) AS `srm_chi_square`,
    2 AS `srm_df`
  FROM `srm_terms`
), `srm` AS (
  SELECT
    *,
    CASE
      WHEN `srm_df` >= 1
      THEN CASE
        WHEN CAST(`srm_chi_square` AS DOUBLE) IS NULL
        THEN NULL
        WHEN CAST(`srm_chi_square` AS DOUBLE) <= 0.0
        THEN 1.0
        ELSE CASE
          WHEN (
            -0.5 * CAST(`srm_chi_square` AS DOUBLE)
          ) < -700.0
          THEN 0.0
          ELSE EXP(-0.5 * CAST(`srm_chi_square` AS DOUBLE))
        END
      END
    END AS `srm_p_value`
  FROM `srm_statistic`
), `readout_rows` AS (
  SELECT
    `s`.*,
    ROW_NUMBER() OVER (
      ORDER BY CASE WHEN `s`.`metric_index` IS NULL THEN 1 ELSE 0 END, `s`.`metric_index`, CASE WHEN `s`.`segment_index` IS NULL THEN 1 ELSE 0 END, `s`.`segment_index`, CASE WHEN `s`.`segment_value` IS NULL THEN 1 ELSE 0 END, `s`.`segment_value`, CASE WHEN `s`.`arm` IS NULL THEN 1 ELSE 0 END, `s`.`arm`
    ) AS `row_id`,
    CAST(ABS(`s`.`statistic`) AS DOUBLE) AS `abs_statistic`,
    CAST(ABS(`s`.`margin_statistic`) AS DOUBLE) AS `abs_margin_statistic`,
    CASE WHEN `s`.`segment_index` > 0 THEN 'segment' ELSE `s`.`role` END AS `family`
  FROM `srm` AS `s`
  WHERE
    `s`.`is_control` = 0
), `t_nodes` AS (
  SELECT
    0 AS `t_nodes_j`,
    CAST(0.0006144963737869658 AS DOUBLE) AS `t_nodes_s`,
    CAST(-6.452438331652476 AS DOUBLE) AS `t_nodes_lw`,
    CAST(0.0 AS DOUBLE) AS `t_nodes_lc`
  UNION ALL
  SELECT
    1,
    CAST(0.003234913866824618 AS DOUBLE),
    CAST(-5.609260709940825 AS DOUBLE),
    CAST(-0.6931471805599456 AS DOUBLE)
  UNION ALL
  SELECT
    2,
    CAST(0.007937708138586574 AS DOUBLE),
    CAST(-5.160536987979967 AS DOUBLE),
    CAST(-0.9808292530117262 AS DOUBLE)
  UNION ALL
  SELECT
    3,
    CAST(0.014704203726876364 AS DOUBLE),
    CAST(-4.854958340285874 AS DOUBLE),
    CAST(-1.1631508098056802 AS DOUBLE)
  UNION ALL
  SELECT
    4,
    CAST(0.0235061484197846 AS DOUBLE),
    CAST(-4.624548719899425 AS DOUBLE),
    CAST(-1.296682202430203 AS DOUBLE)
  UNION ALL
  SELECT
    5,
    CAST(0.034306654646722834 AS DOUBLE),
    CAST(-4.440895463126738 AS DOUBLE),
    CAST(-1.4020427180880324 AS DOUBLE)
  UNION ALL
  SELECT
    6,
    CAST(0.047060431642215184 AS DOUBLE),
    CAST(-4.289392406277602 AS DOUBLE),
    CAST(-1.4890540950776625 AS DOUBLE)
  UNION ALL
  SELECT
    7,
    CAST(0.06171398986287607 AS DOUBLE),
    CAST(-4.161535306747225 AS DOUBLE),
    CAST(-1.5631620672313797 AS DOUBLE)
  UNION ALL
  SELECT
    8,
    CAST(0.07820586918780326 AS DOUBLE),
    CAST(-4.051939811056851 AS DOUBLE),
    CAST(-1.6277005883689508 AS DOUBLE)
  UNION ALL
  SELECT
    9,
    CAST(0.09646689798527869 AS DOUBLE),
    CAST(-3.956985040763598 AS DOUBLE),
    CAST(-1.6848590022088974 AS DOUBLE)
  UNION ALL
  SELECT
    10,
    CAST(0.11642048374212982 AS DOUBLE),
    CAST(-3.8741232859542807 AS DOUBLE),
    CAST(-1.7361522965964493 AS DOUBLE)
  UNION ALL
  SELECT
    11,
    CAST(0.13798293453809268 AS DOUBLE),
    CAST(-3.8014982282775445 AS DOUBLE),
    CAST(-1.78267231223135 AS DOUBLE)
  UNION ALL
  SELECT
    12,
    CAST(0.16106381018366805 AS DOUBLE),
    CAST(-3.737719791199713 AS DOUBLE),
    CAST(-1.8252319266501367 AS DOUBLE)
  UNION ALL
  SELECT
    13,
    CAST(0.1855663016117432 AS DOUBLE),
    CAST(-3.68172440158478 AS DOUBLE),
    CAST(-1.8644526398034102 AS DOUBLE)
  UNION ALL
  SELECT
    14,
    CAST(0.21138763695801366 AS DOUBLE),
    CAST(-3.6326845918426396 AS DOUBLE),
    CAST(-1.9008202839743085 AS DOUBLE)
  UNION ALL
  SELECT
    15,
    CAST(0.2384195126388835 AS DOUBLE),
    CAST(-3.5899484972417697 AS DOUBLE),
    CAST(-1.9347218356499667 AS DOUBLE)
  UNION ALL
  SELECT
    16,
    CAST(0.2665485476245208 AS DOUBLE),
    CAST(-3.5529982127906488 AS DOUBLE),
    CAST(-1.9664705339645643 AS DOUBLE)
  UNION ALL
  SELECT
    17,
    CAST(0.2956567590046416 AS DOUBLE),
    CAST(-3.5214204719215334 AS DOUBLE),
    CAST(-1.9963234971142398 AS DOUBLE)
  UNION ALL
  SELECT
    18,
    CAST(0.32562205685391965 AS DOUBLE),
    CAST(-3.49488563126943 AS DOUBLE),
    CAST(-2.024494374080934 AS DOUBLE)
  UNION ALL
  SELECT
    19,
    CAST(0.3563187563222722 AS DOUBLE),
    CAST(-3.473132419151044 AS DOUBLE),
    CAST(-2.051162621163101 AS DOUBLE)
  UNION ALL
  SELECT
    20,
    CAST(0.38761810480265546 AS DOUBLE),
    CAST(-3.455956797911759 AS DOUBLE),
    CAST(-2.0764804291474057 AS DOUBLE)
  UNION ALL
  SELECT
    21,
    CAST(0.41938882196555416 AS DOUBLE),
    CAST(-3.443203849508935 AS DOUBLE),
    CAST(-2.100577980726449 AS DOUBLE)
  UNION ALL
  SELECT
    22,
    CAST(0.4514976503952687 AS DOUBLE),
    CAST(-3.4347619557702096 AS DOUBLE),
    CAST(-2.123567498951136 AS DOUBLE)
  UNION ALL
  SELECT
    23,
    CAST(0.4838099145185653 AS DOUBLE),
    CAST(-3.4305587876316634 AS DOUBLE),
    CAST(-2.1455464056699185 AS DOUBLE)
  UNION ALL
  SELECT
    24,
    CAST(0.5161900854814346 AS DOUBLE),
    CAST(-3.4305587876316634 AS DOUBLE),
    CAST(-2.1665998148677588 AS DOUBLE)
  UNION ALL
  SELECT
    25,
    CAST(0.5485023496047313 AS DOUBLE),
    CAST(-3.4347619557702096 AS DOUBLE),
    CAST(-2.1868025221852534 AS DOUBLE)
  UNION ALL
  SELECT
    26,
    CAST(0.5806111780344458 AS DOUBLE),
    CAST(-3.443203849508935 AS DOUBLE),
    CAST(-2.206220608042372 AS DOUBLE)
  UNION ALL
  SELECT
    27,
    CAST(0.6123818951973445 AS DOUBLE),
    CAST(-3.455956797911759 AS DOUBLE),
    CAST(-2.224912741054581 AS DOUBLE)
  UNION ALL
  SELECT
    28,
    CAST(0.6436812436777277 AS DOUBLE),
    CAST(-3.473132419151044 AS DOUBLE),
    CAST(-2.24293124655717 AS DOUBLE)
  UNION ALL
  SELECT
    29,
    CAST(0.6743779431460803 AS DOUBLE),
    CAST(-3.49488563126943 AS DOUBLE),
    CAST(-2.2603229892690777 AS DOUBLE)
  UNION ALL
  SELECT
    30,
    CAST(0.7043432409953584 AS DOUBLE),
    CAST(-3.5214204719215334 AS DOUBLE),
    CAST(-2.2771301075854353 AS DOUBLE)
  UNION ALL
  SELECT
    31,
    CAST(0.7334514523754792 AS DOUBLE),
    CAST(-3.5529982127906488 AS DOUBLE),
    CAST(-2.293390628457246 AS DOUBLE)
  UNION ALL
  SELECT
    32,
    CAST(0.7615804873611165 AS DOUBLE),
    CAST(-3.5899484972417697 AS DOUBLE),
    CAST(-2.309138985425328 AS DOUBLE)
  UNION ALL
  SELECT
    33,
    CAST(0.7886123630419863 AS DOUBLE),
    CAST(-3.6326845918426396 AS DOUBLE),
    CAST(-2.324406457556151 AS DOUBLE)
  UNION ALL
  SELECT
    34,
    CAST(0.8144336983882567 AS DOUBLE),
    CAST(-3.68172440158478 AS DOUBLE),
    CAST(-2.3392215433412815 AS DOUBLE)
  UNION ALL
  SELECT
    35,
    CAST(0.8389361898163319 AS DOUBLE),
    CAST(-3.737719791199713 AS DOUBLE),
    CAST(-2.3536102807934256 AS DOUBLE)
  UNION ALL
  SELECT
    36,
    CAST(0.8620170654619073 AS DOUBLE),
    CAST(-3.8014982282775445 AS DOUBLE),
    CAST(-2.367596522768146 AS DOUBLE)
  UNION ALL
  SELECT
    37,
    CAST(0.8835795162578701 AS DOUBLE),
    CAST(-3.8741232859542807 AS DOUBLE),
    CAST(-2.3812021748238976 AS DOUBLE)
  UNION ALL
  SELECT
    38,
    CAST(0.9035331020147213 AS DOUBLE),
    CAST(-3.956985040763598 AS DOUBLE),
    CAST(-2.3944474015739274 AS DOUBLE)
  UNION ALL
  SELECT
    39,
    CAST(0.9217941308121967 AS DOUBLE),
    CAST(-4.051939811056851 AS DOUBLE),
    CAST(-2.4073508064098164 AS DOUBLE)
  UNION ALL
  SELECT
    40,
    CAST(0.938286010137124 AS DOUBLE),
    CAST(-4.161535306747225 AS DOUBLE),
    CAST(-2.4199295886166894 AS DOUBLE)
  UNION ALL
  SELECT
    41,
    CAST(0.9529395683577848 AS DOUBLE),
    CAST(-4.289392406277602 AS DOUBLE),
    CAST(-2.4321996812085587 AS DOUBLE)
  UNION ALL
  SELECT
    42,
    CAST(0.9656933453532772 AS DOUBLE),
    CAST(-4.440895463126738 AS DOUBLE),
    CAST(-2.444175872255201 AS DOUBLE)
  UNION ALL
  SELECT
    43,
    CAST(0.9764938515802154 AS DOUBLE),
    CAST(-4.624548719899425 AS DOUBLE),
    CAST(-2.4558719120184165 AS DOUBLE)
  UNION ALL
  SELECT
    44,
    CAST(0.9852957962731237 AS DOUBLE),
    CAST(-4.854958340285874 AS DOUBLE),
    CAST(-2.467300607842027 AS DOUBLE)
  UNION ALL
  SELECT
    45,
    CAST(0.9920622918614135 AS DOUBLE),
    CAST(-5.160536987979967 AS DOUBLE),
    CAST(-2.478473908440151 AS DOUBLE)
  UNION ALL
  SELECT
    46,
    CAST(0.9967650861331754 AS DOUBLE),
    CAST(-5.609260709940825 AS DOUBLE),
    CAST(-2.4894029789724073 AS DOUBLE)
  UNION ALL
  SELECT
    47,
    CAST(0.999385503626213 AS DOUBLE),
    CAST(-6.452438331652476 AS DOUBLE),
    CAST(-2.5000982680890615 AS DOUBLE)
), `td__input` AS (
  SELECT
    `td__src`.*,
    CAST(`df` AS DOUBLE) AS `td__df`,
    CAST(`abs_statistic` AS DOUBLE) AS `td__t0`,
    CAST(`margin_statistic` AS DOUBLE) AS `td__t1`,
    CAST(0.975 AS DOUBLE) AS `td__q0`,
    COUNT(*) OVER (PARTITION BY `td__src`.`row_id`) AS `td__barrier0`
  FROM `readout_rows` AS `td__src`
), `td__prep` AS (
  SELECT
    `td__i0`.*,
    CASE
      WHEN `td__q0` > 0.0 AND `td__q0` < 0.5
      THEN `td__q0`
      WHEN `td__q0` >= 0.5 AND `td__q0` < 1.0
      THEN 1.0 - `td__q0`
    END AS `td__p0`,
    2.0 * CASE
      WHEN `td__q0` > 0.0 AND `td__q0` < 0.5
      THEN `td__q0`
      WHEN `td__q0` >= 0.5 AND `td__q0` < 1.0
      THEN 1.0 - `td__q0`
    END AS `td__p20`,
    CASE
      WHEN `td__df` >= 1.0
      THEN CASE WHEN `td__df` > 1e7 THEN 1e7 ELSE `td__df` END
    END AS `td__n`,
    CASE WHEN `td__df` > 0.0 THEN `td__df` END AS `td__dfp`
  FROM `td__input` AS `td__i0`
), `td__h1` AS (
  SELECT
    `td__i1`.*,
    1.0 / (
      `td__n` - 0.5
    ) AS `td__a`,
    CAST(1.9599639845400536 AS DOUBLE) AS `td__z0`,
    COUNT(*) OVER (PARTITION BY `td__i1`.`row_id`) AS `td__barrier1`
  FROM `td__prep` AS `td__i1`
), `td__h2` AS (
  SELECT
    `td__i2`.*,
    48.0 / (
      `td__a` * `td__a`
    ) AS `td__b`,
    (
      (
        20700.0 * `td__a` / (
          48.0 / (
            `td__a` * `td__a`
          )
        ) - 98.0
      ) * `td__a` - 16.0
    ) * `td__a` + 96.36 AS `td__c`
  FROM `td__h1` AS `td__i2`
), `td__h3` AS (
  SELECT
    `td__i3`.*,
    (
      (
        94.5 / (
          `td__b` + `td__c`
        ) - 3.0
      ) / `td__b` + 1.0
    ) * SQRT(`td__a` * 1.5707963267948966) * `td__n` AS `td__d`
  FROM `td__h2` AS `td__i3`
), `td__h4` AS (
  SELECT
    `td__i4`.*,
    CASE
      WHEN (
        (
          2.0 / `td__n`
        ) * LN(CASE WHEN `td__d` * `td__p20` > 0.0 THEN `td__d` * `td__p20` END)
      ) < -700.0
      THEN 0.0
      ELSE EXP(
        (
          2.0 / `td__n`
        ) * LN(CASE WHEN `td__d` * `td__p20` > 0.0 THEN `td__d` * `td__p20` END)
      )
    END AS `td__yy0`,
    (
      (
        (
          (
            (
              0.4 * `td__z0` * `td__z0` + 6.3
            ) * `td__z0` * `td__z0` + 36.0
          ) * `td__z0` * `td__z0` + 94.5
        ) / NULLIF(
          (
            (
              (
                0.05 * `td__d` * `td__z0` - 5.0
              ) * `td__z0` - 7.0
            ) * `td__z0` - 2.0
          ) * `td__z0` + `td__b` + `td__c` + CASE
            WHEN `td__n` < 5.0
            THEN 0.3 * (
              `td__n` - 4.5
            ) * (
              `td__z0` + 0.6
            )
            ELSE 0.0
          END,
          0.0
        ) - `td__z0` * `td__z0` - 3.0
      ) / `td__b` + 1.0
    ) * `td__z0` AS `td__yb0`,
    COUNT(*) OVER (PARTITION BY `td__i4`.`row_id`) AS `td__barrier4`
  FROM `td__h3` AS `td__i4`
), `td__h5` AS (
  SELECT
    `td__i5`.*,
    `td__a` * CASE WHEN ABS(`td__yb0`) < 1e-100 THEN 0.0 ELSE `td__yb0` * `td__yb0` END AS `td__ya0`,
    COUNT(*) OVER (PARTITION BY `td__i5`.`row_id`) AS `td__barrier5`
  FROM `td__h4` AS `td__i5`
), `td__h6` AS (
  SELECT
    `td__i6`.*,
    CASE
      WHEN `td__df` = 1.0
      THEN COS(`td__p20` * 1.5707963267948966) / NULLIF(SIN(`td__p20` * 1.5707963267948966), 0.0)
      WHEN `td__df` = 2.0
      THEN SQRT(
        CASE
          WHEN 2.0 / NULLIF(`td__p20` * (
            2.0 - `td__p20`
          ), 0.0) - 2.0 > 0.0
          THEN 2.0 / NULLIF(`td__p20` * (
            2.0 - `td__p20`
          ), 0.0) - 2.0
          ELSE 0.0
        END
      )
      WHEN `td__yy0` > 0.05 + `td__a`
      THEN SQRT(
        `td__n` * CASE
          WHEN `td__ya0` > 0.1
          THEN EXP(CASE WHEN `td__ya0` > 700.0 THEN 700.0 ELSE `td__ya0` END) - 1.0
          ELSE (
            (
              (
                `td__ya0` + 4.0
              ) * `td__ya0` + 12.0
            ) * CASE WHEN ABS(`td__ya0`) < 1e-100 THEN 0.0 ELSE `td__ya0` * `td__ya0` END
          ) / 24.0 + `td__ya0`
        END
      )
      ELSE SQRT(
        `td__n` * (
          (
            (
              1.0 / NULLIF(
                (
                  (
                    `td__n` + 6.0
                  ) / NULLIF(`td__n` * `td__yy0`, 0.0) - 0.089 * `td__d` - 0.822
                ) * (
                  `td__n` + 2.0
                ) * 3.0,
                0.0
              ) + 0.5 / (
                `td__n` + 4.0
              )
            ) * `td__yy0` - 1.0
          ) * (
            `td__n` + 1.0
          ) / (
            `td__n` + 2.0
          ) + 1.0 / NULLIF(`td__yy0`, 0.0)
        )
      )
    END AS `td__q0_0`,
    COUNT(*) OVER (PARTITION BY `td__i6`.`row_id`) AS `td__barrier6`
  FROM `td__h5` AS `td__i6`
), `td__1a` AS (
  SELECT
    `td__1a0`.*,
    CASE WHEN `td__dfp` > 0.0 THEN 90.0 / (
      `td__dfp` + 1.0
    ) END AS `td__1y`,
    -0.5 * (
      `td__dfp` + 1.0
    ) AS `td__1h`,
    ABS(`td__t0`) / NULLIF(SQRT(`td__dfp`), 0.0) AS `td__1r0`,
    ABS(`td__t1`) / NULLIF(SQRT(`td__dfp`), 0.0) AS `td__1r1`,
    ABS(`td__q0_0`) / NULLIF(SQRT(`td__dfp`), 0.0) AS `td__1r2`,
    COUNT(*) OVER (PARTITION BY `td__1a0`.`row_id`) AS `td__1ba`
  FROM `td__h6` AS `td__1a0`
), `td__1b` AS (
  SELECT
    `td__1b0`.*,
    EXP(`td__1y`) AS `td__1e`,
    `td__1y` * EXP(`td__1y`) AS `td__1ey`,
    CASE WHEN `td__1r0` < 1e-100 THEN 0.0 WHEN `td__1r0` < 1.0 THEN `td__1r0` ELSE 1.0 END AS `td__1rc0`,
    CASE WHEN ABS(`td__1r0`) < 1e-100 THEN 0.0 ELSE `td__1r0` * `td__1r0` END AS `td__1rr0`,
    CASE
      WHEN `td__1r0` <= 1.0
      THEN CASE WHEN ABS(`td__1r0`) < 1e-100 THEN 0.0 ELSE `td__1r0` * `td__1r0` END
      WHEN `td__1r0` < 1e100
      THEN 1.0 / (
        `td__1r0` * `td__1r0`
      )
      ELSE 0.0
    END AS `td__1v0`,
    CASE WHEN `td__1r1` < 1e-100 THEN 0.0 WHEN `td__1r1` < 1.0 THEN `td__1r1` ELSE 1.0 END AS `td__1rc1`,
    CASE WHEN ABS(`td__1r1`) < 1e-100 THEN 0.0 ELSE `td__1r1` * `td__1r1` END AS `td__1rr1`,
    CASE
      WHEN `td__1r1` <= 1.0
      THEN CASE WHEN ABS(`td__1r1`) < 1e-100 THEN 0.0 ELSE `td__1r1` * `td__1r1` END
      WHEN `td__1r1` < 1e100
      THEN 1.0 / (
        `td__1r1` * `td__1r1`
      )
      ELSE 0.0
    END AS `td__1v1`,
    CASE WHEN `td__1r2` < 1e-100 THEN 0.0 WHEN `td__1r2` < 1.0 THEN `td__1r2` ELSE 1.0 END AS `td__1rc2`,
    CASE WHEN ABS(`td__1r2`) < 1e-100 THEN 0.0 ELSE `td__1r2` * `td__1r2` END AS `td__1rr2`,
    CASE
      WHEN `td__1r2` <= 1.0
      THEN CASE WHEN ABS(`td__1r2`) < 1e-100 THEN 0.0 ELSE `td__1r2` * `td__1r2` END
      WHEN `td__1r2` < 1e100
      THEN 1.0 / (
        `td__1r2` * `td__1r2`
      )
      ELSE 0.0
    END AS `td__1v2`,
    COUNT(*) OVER (PARTITION BY `td__1b0`.`row_id`) AS `td__1bb`
  FROM `td__1a` AS `td__1b0`
), `td__1c` AS (
  SELECT
    `td__1c0`.*,
    CASE WHEN `td__1ey` >= 1.0 THEN 1.0 ELSE SQRT(`td__1ey`) END AS `td__1vw`,
    CASE
      WHEN `td__1r0` < 1e-100
      THEN 0.0
      WHEN `td__1r0` >= 1e100
      THEN -2.0 * LN(`td__1r0`)
      ELSE CASE WHEN `td__1r0` <= 1.0 THEN 0.0 ELSE -2.0 * LN(`td__1r0`) END - CASE
        WHEN 1.0 + `td__1v0` = 1.0
        THEN `td__1v0`
        ELSE LN(1.0 + `td__1v0`) * `td__1v0` / NULLIF((
          1.0 + `td__1v0`
        ) - 1.0, 0.0)
      END
    END AS `td__1lnx0`,
    CASE
      WHEN `td__1r0` >= 1.0
      THEN 0.0
      WHEN `td__1rr0` * `td__1e` + `td__1ey` >= 1.0
      THEN 1.0 - `td__1rc0`
      ELSE SQRT(`td__1rr0` * `td__1e` + `td__1ey`) - `td__1rc0`
    END AS `td__1len0`,
    CASE
      WHEN `td__1r1` < 1e-100
      THEN 0.0
      WHEN `td__1r1` >= 1e100
      THEN -2.0 * LN(`td__1r1`)
      ELSE CASE WHEN `td__1r1` <= 1.0 THEN 0.0 ELSE -2.0 * LN(`td__1r1`) END - CASE
        WHEN 1.0 + `td__1v1` = 1.0
        THEN `td__1v1`
        ELSE LN(1.0 + `td__1v1`) * `td__1v1` / NULLIF((
          1.0 + `td__1v1`
        ) - 1.0, 0.0)
      END
    END AS `td__1lnx1`,
    CASE
      WHEN `td__1r1` >= 1.0
      THEN 0.0
      WHEN `td__1rr1` * `td__1e` + `td__1ey` >= 1.0
      THEN 1.0 - `td__1rc1`
      ELSE SQRT(`td__1rr1` * `td__1e` + `td__1ey`) - `td__1rc1`
    END AS `td__1len1`,
    CASE
      WHEN `td__1r2` < 1e-100
      THEN 0.0
      WHEN `td__1r2` >= 1e100
      THEN -2.0 * LN(`td__1r2`)
      ELSE CASE WHEN `td__1r2` <= 1.0 THEN 0.0 ELSE -2.0 * LN(`td__1r2`) END - CASE
        WHEN 1.0 + `td__1v2` = 1.0
        THEN `td__1v2`
        ELSE LN(1.0 + `td__1v2`) * `td__1v2` / NULLIF((
          1.0 + `td__1v2`
        ) - 1.0, 0.0)
      END
    END AS `td__1lnx2`,
    CASE
      WHEN `td__1r2` >= 1.0
      THEN 0.0
      WHEN `td__1rr2` * `td__1e` + `td__1ey` >= 1.0
      THEN 1.0 - `td__1rc2`
      ELSE SQRT(`td__1rr2` * `td__1e` + `td__1ey`) - `td__1rc2`
    END AS `td__1len2`,
    COUNT(*) OVER (PARTITION BY `td__1c0`.`row_id`) AS `td__1bc`
  FROM `td__1b` AS `td__1c0`
), `td__1d` AS (
  SELECT
    `td__1d0`.*,
    `t_nodes_j` AS `td__1j`,
    `t_nodes_lw` AS `td__1lw`,
    `t_nodes_lc` - LN(`td__dfp` + 2.0 * `t_nodes_j`) AS `td__1lc`,
    0.5 * `td__dfp` + `t_nodes_j` AS `td__1hx`,
    CASE
      WHEN ABS(`td__1vw` * `t_nodes_s`) < 1e-100
      THEN 0.0
      ELSE (
        `td__1vw` * `t_nodes_s`
      ) * (
        `td__1vw` * `t_nodes_s`
      )
    END AS `td__1u`,
    CASE
      WHEN ABS((
        `td__1rc0` + `td__1len0` * `t_nodes_s`
      )) < 1e-100
      THEN 0.0
      ELSE (
        `td__1rc0` + `td__1len0` * `t_nodes_s`
      ) * (
        `td__1rc0` + `td__1len0` * `t_nodes_s`
      )
    END AS `td__1u0`,
    CASE
      WHEN ABS((
        `td__1rc1` + `td__1len1` * `t_nodes_s`
      )) < 1e-100
      THEN 0.0
      ELSE (
        `td__1rc1` + `td__1len1` * `t_nodes_s`
      ) * (
        `td__1rc1` + `td__1len1` * `t_nodes_s`
      )
    END AS `td__1u1`,
    CASE
      WHEN ABS((
        `td__1rc2` + `td__1len2` * `t_nodes_s`
      )) < 1e-100
      THEN 0.0
      ELSE (
        `td__1rc2` + `td__1len2` * `t_nodes_s`
      ) * (
        `td__1rc2` + `td__1len2` * `t_nodes_s`
      )
    END AS `td__1u2`,
    COUNT(*) OVER (PARTITION BY `td__1d0`.`row_id`) AS `td__1bd`
  FROM `td__1c` AS `td__1d0`
  CROSS JOIN `t_nodes`
), `td__1g` AS (
  SELECT
    `td__1g0`.*,
    `td__1h` * CASE
      WHEN 1.0 + `td__1u` = 1.0
      THEN `td__1u`
      ELSE LN(1.0 + `td__1u`) * `td__1u` / NULLIF((
        1.0 + `td__1u`
      ) - 1.0, 0.0)
    END + `td__1lw` + LN(`td__1vw`) AS `td__1xgw`,
    `td__1hx` * -0.6931471805599453 + `td__1lc` AS `td__1xsb`,
    CASE
      WHEN `td__1len0` > 0.0
      THEN `td__1h` * CASE
        WHEN 1.0 + `td__1u0` = 1.0
        THEN `td__1u0`
        ELSE LN(1.0 + `td__1u0`) * `td__1u0` / NULLIF((
          1.0 + `td__1u0`
        ) - 1.0, 0.0)
      END + `td__1lw` + LN(CASE WHEN `td__1len0` > 0.0 THEN `td__1len0` ELSE 1.0 END)
    END AS `td__1xgg0`,
    `td__1hx` * `td__1lnx0` + `td__1lc` AS `td__1xss0`,
    CASE
      WHEN `td__1len1` > 0.0
      THEN `td__1h` * CASE
        WHEN 1.0 + `td__1u1` = 1.0
        THEN `td__1u1`
        ELSE LN(1.0 + `td__1u1`) * `td__1u1` / NULLIF((
          1.0 + `td__1u1`
        ) - 1.0, 0.0)
      END + `td__1lw` + LN(CASE WHEN `td__1len1` > 0.0 THEN `td__1len1` ELSE 1.0 END)
    END AS `td__1xgg1`,
    `td__1hx` * `td__1lnx1` + `td__1lc` AS `td__1xss1`,
    CASE
      WHEN `td__1len2` > 0.0
      THEN `td__1h` * CASE
        WHEN 1.0 + `td__1u2` = 1.0
        THEN `td__1u2`
        ELSE LN(1.0 + `td__1u2`) * `td__1u2` / NULLIF((
          1.0 + `td__1u2`
        ) - 1.0, 0.0)
      END + `td__1lw` + LN(CASE WHEN `td__1len2` > 0.0 THEN `td__1len2` ELSE 1.0 END)
    END AS `td__1xgg2`,
    `td__1hx` * `td__1lnx2` + `td__1lc` AS `td__1xss2`,
    COUNT(*) OVER (PARTITION BY `td__1g0`.`row_id`) AS `td__1bg`
  FROM `td__1d` AS `td__1g0`
), `td__1x` AS (
  SELECT
    `td__1x0`.*,
    CASE WHEN `td__1xgw` < -700.0 THEN 0.0 ELSE EXP(`td__1xgw`) END AS `td__1gw`,
    CASE WHEN `td__1xsb` < -700.0 THEN 0.0 ELSE EXP(`td__1xsb`) END AS `td__1sb`,
    CASE
      WHEN `td__1len0` > 0.0
      THEN CASE WHEN `td__1xgg0` < -700.0 THEN 0.0 ELSE EXP(`td__1xgg0`) END
      ELSE 0.0
    END AS `td__1gg0`,
    CASE WHEN `td__1xss0` < -700.0 THEN 0.0 ELSE EXP(`td__1xss0`) END AS `td__1ss0`,
    CASE
      WHEN `td__1len1` > 0.0
      THEN CASE WHEN `td__1xgg1` < -700.0 THEN 0.0 ELSE EXP(`td__1xgg1`) END
      ELSE 0.0
    END AS `td__1gg1`,
    CASE WHEN `td__1xss1` < -700.0 THEN 0.0 ELSE EXP(`td__1xss1`) END AS `td__1ss1`,
    CASE
      WHEN `td__1len2` > 0.0
      THEN CASE WHEN `td__1xgg2` < -700.0 THEN 0.0 ELSE EXP(`td__1xgg2`) END
      ELSE 0.0
    END AS `td__1gg2`,
    CASE WHEN `td__1xss2` < -700.0 THEN 0.0 ELSE EXP(`td__1xss2`) END AS `td__1ss2`,
    COUNT(*) OVER (PARTITION BY `td__1x0`.`row_id`) AS `td__1bx`
  FROM `td__1g` AS `td__1x0`
), `td__1sums` AS (
  SELECT
    `td__1s0`.*,
    SUM(`td__1gw`) OVER (PARTITION BY `td__1s0`.`row_id`) AS `td__1sgw`,
    SUM(`td__1gg0`) OVER (PARTITION BY `td__1s0`.`row_id`) AS `td__1sgg0`,
    SUM(`td__1ss0`) OVER (PARTITION BY `td__1s0`.`row_id`) AS `td__1sss0`,
    SUM(`td__1gg1`) OVER (PARTITION BY `td__1s0`.`row_id`) AS `td__1sgg1`,
    SUM(`td__1ss1`) OVER (PARTITION BY `td__1s0`.`row_id`) AS `td__1sss1`,
    SUM(`td__1gg2`) OVER (PARTITION BY `td__1s0`.`row_id`) AS `td__1sgg2`,
    SUM(`td__1ss2`) OVER (PARTITION BY `td__1s0`.`row_id`) AS `td__1sss2`,
    SUM(`td__1sb`) OVER (PARTITION BY `td__1s0`.`row_id`) AS `td__1ssb`
  FROM `td__1x` AS `td__1s0`
), `td__1tail` AS (
  SELECT
    `td__1t0`.*,
    CASE
      WHEN `td__1r0` IS NULL
      THEN NULL
      WHEN `td__1r0` >= 1.0
      THEN `td__1sss0` / NULLIF(`td__1sgw` + `td__1ssb`, 0.0)
      ELSE (
        `td__1sgg0` + `td__1ssb`
      ) / NULLIF(`td__1sgw` + `td__1ssb`, 0.0)
    END AS `td__1t20`,
    CASE
      WHEN `td__1r1` IS NULL
      THEN NULL
      WHEN `td__1r1` >= 1.0
      THEN `td__1sss1` / NULLIF(`td__1sgw` + `td__1ssb`, 0.0)
      ELSE (
        `td__1sgg1` + `td__1ssb`
      ) / NULLIF(`td__1sgw` + `td__1ssb`, 0.0)
    END AS `td__1t21`,
    CASE
      WHEN `td__1r2` IS NULL
      THEN NULL
      WHEN `td__1r2` >= 1.0
      THEN `td__1sss2` / NULLIF(`td__1sgw` + `td__1ssb`, 0.0)
      ELSE (
        `td__1sgg2` + `td__1ssb`
      ) / NULLIF(`td__1sgw` + `td__1ssb`, 0.0)
    END AS `td__1t22`,
    `td__1sgw` + `td__1ssb` AS `td__1w`
  FROM `td__1sums` AS `td__1t0`
  WHERE
    `td__1t0`.`td__1j` = 0
), `td__step1` AS (
  SELECT
    `td__st1`.*,
    `td__q0_0` + 2.0 * (
      0.5 * `td__1t22` - `td__p0`
    ) / NULLIF(
      2.0 * CASE
        WHEN (
          0.5 * (
            `td__dfp` + 1.0
          ) * `td__1lnx2` - LN(2.0 * SQRT(`td__dfp`) * `td__1w`)
        ) < -700.0
        THEN 0.0
        ELSE EXP(0.5 * (
          `td__dfp` + 1.0
        ) * `td__1lnx2` - LN(2.0 * SQRT(`td__dfp`) * `td__1w`))
      END - (
        0.5 * `td__1t22` - `td__p0`
      ) * (
        `td__dfp` + 1.0
      ) * `td__q0_0` / NULLIF(
        `td__dfp` + CASE WHEN ABS(`td__q0_0`) < 1e-100 THEN 0.0 ELSE `td__q0_0` * `td__q0_0` END,
        0.0
      ),
      0.0
    ) AS `td__q1_0`,
    COUNT(*) OVER (PARTITION BY `td__st1`.`row_id`) AS `td__barrier_s1`
  FROM `td__1tail` AS `td__st1`
), `td__2a` AS (
  SELECT
    `td__2a0`.*,
    CASE WHEN `td__dfp` > 0.0 THEN 90.0 / (
      `td__dfp` + 1.0
    ) END AS `td__2y`,
    -0.5 * (
      `td__dfp` + 1.0
    ) AS `td__2h`,
    ABS(`td__q1_0`) / NULLIF(SQRT(`td__dfp`), 0.0) AS `td__2r0`,
    COUNT(*) OVER (PARTITION BY `td__2a0`.`row_id`) AS `td__2ba`
  FROM `td__step1` AS `td__2a0`
), `td__2b` AS (
  SELECT
    `td__2b0`.*,
    EXP(`td__2y`) AS `td__2e`,
    `td__2y` * EXP(`td__2y`) AS `td__2ey`,
    CASE WHEN `td__2r0` < 1e-100 THEN 0.0 WHEN `td__2r0` < 1.0 THEN `td__2r0` ELSE 1.0 END AS `td__2rc0`,
    CASE WHEN ABS(`td__2r0`) < 1e-100 THEN 0.0 ELSE `td__2r0` * `td__2r0` END AS `td__2rr0`,
    CASE
      WHEN `td__2r0` <= 1.0
      THEN CASE WHEN ABS(`td__2r0`) < 1e-100 THEN 0.0 ELSE `td__2r0` * `td__2r0` END
      WHEN `td__2r0` < 1e100
      THEN 1.0 / (
        `td__2r0` * `td__2r0`
      )
      ELSE 0.0
    END AS `td__2v0`,
    COUNT(*) OVER (PARTITION BY `td__2b0`.`row_id`) AS `td__2bb`
  FROM `td__2a` AS `td__2b0`
), `td__2c` AS (
  SELECT
    `td__2c0`.*,
    CASE WHEN `td__2ey` >= 1.0 THEN 1.0 ELSE SQRT(`td__2ey`) END AS `td__2vw`,
    CASE
      WHEN `td__2r0` < 1e-100
      THEN 0.0
      WHEN `td__2r0` >= 1e100
      THEN -2.0 * LN(`td__2r0`)
      ELSE CASE WHEN `td__2r0` <= 1.0 THEN 0.0 ELSE -2.0 * LN(`td__2r0`) END - CASE
        WHEN 1.0 + `td__2v0` = 1.0
        THEN `td__2v0`
        ELSE LN(1.0 + `td__2v0`) * `td__2v0` / NULLIF((
          1.0 + `td__2v0`
        ) - 1.0, 0.0)
      END
    END AS `td__2lnx0`,
    CASE
      WHEN `td__2r0` >= 1.0
      THEN 0.0
      WHEN `td__2rr0` * `td__2e` + `td__2ey` >= 1.0
      THEN 1.0 - `td__2rc0`
      ELSE SQRT(`td__2rr0` * `td__2e` + `td__2ey`) - `td__2rc0`
    END AS `td__2len0`,
    COUNT(*) OVER (PARTITION BY `td__2c0`.`row_id`) AS `td__2bc`
  FROM `td__2b` AS `td__2c0`
), `td__2d` AS (
  SELECT
    `td__2d0`.*,
    `t_nodes_j` AS `td__2j`,
    `t_nodes_lw` AS `td__2lw`,
    `t_nodes_lc` - LN(`td__dfp` + 2.0 * `t_nodes_j`) AS `td__2lc`,
    0.5 * `td__dfp` + `t_nodes_j` AS `td__2hx`,
    CASE
      WHEN ABS(`td__2vw` * `t_nodes_s`) < 1e-100
      THEN 0.0
      ELSE (
        `td__2vw` * `t_nodes_s`
      ) * (
        `td__2vw` * `t_nodes_s`
      )
    END AS `td__2u`,
    CASE
      WHEN ABS((
        `td__2rc0` + `td__2len0` * `t_nodes_s`
      )) < 1e-100
      THEN 0.0
      ELSE (
        `td__2rc0` + `td__2len0` * `t_nodes_s`
      ) * (
        `td__2rc0` + `td__2len0` * `t_nodes_s`
      )
    END AS `td__2u0`,
    COUNT(*) OVER (PARTITION BY `td__2d0`.`row_id`) AS `td__2bd`
  FROM `td__2c` AS `td__2d0`
  CROSS JOIN `t_nodes`
), `td__2g` AS (
  SELECT
    `td__2g0`.*,
    `td__2h` * CASE
      WHEN 1.0 + `td__2u` = 1.0
      THEN `td__2u`
      ELSE LN(1.0 + `td__2u`) * `td__2u` / NULLIF((
        1.0 + `td__2u`
      ) - 1.0, 0.0)
    END + `td__2lw` + LN(`td__2vw`) AS `td__2xgw`,
    `td__2hx` * -0.6931471805599453 + `td__2lc` AS `td__2xsb`,
    CASE
      WHEN `td__2len0` > 0.0
      THEN `td__2h` * CASE
        WHEN 1.0 + `td__2u0` = 1.0
        THEN `td__2u0`
        ELSE LN(1.0 + `td__2u0`) * `td__2u0` / NULLIF((
          1.0 + `td__2u0`
        ) - 1.0, 0.0)
      END + `td__2lw` + LN(CASE WHEN `td__2len0` > 0.0 THEN `td__2len0` ELSE 1.0 END)
    END AS `td__2xgg0`,
    `td__2hx` * `td__2lnx0` + `td__2lc` AS `td__2xss0`,
    COUNT(*) OVER (PARTITION BY `td__2g0`.`row_id`) AS `td__2bg`
  FROM `td__2d` AS `td__2g0`
), `td__2x` AS (
  SELECT
    `td__2x0`.*,
    CASE WHEN `td__2xgw` < -700.0 THEN 0.0 ELSE EXP(`td__2xgw`) END AS `td__2gw`,
    CASE WHEN `td__2xsb` < -700.0 THEN 0.0 ELSE EXP(`td__2xsb`) END AS `td__2sb`,
    CASE
      WHEN `td__2len0` > 0.0
      THEN CASE WHEN `td__2xgg0` < -700.0 THEN 0.0 ELSE EXP(`td__2xgg0`) END
      ELSE 0.0
    END AS `td__2gg0`,
    CASE WHEN `td__2xss0` < -700.0 THEN 0.0 ELSE EXP(`td__2xss0`) END AS `td__2ss0`,
    COUNT(*) OVER (PARTITION BY `td__2x0`.`row_id`) AS `td__2bx`
  FROM `td__2g` AS `td__2x0`
), `td__2sums` AS (
  SELECT
    `td__2s0`.*,
    SUM(`td__2gw`) OVER (PARTITION BY `td__2s0`.`row_id`) AS `td__2sgw`,
    SUM(`td__2gg0`) OVER (PARTITION BY `td__2s0`.`row_id`) AS `td__2sgg0`,
    SUM(`td__2ss0`) OVER (PARTITION BY `td__2s0`.`row_id`) AS `td__2sss0`,
    SUM(`td__2sb`) OVER (PARTITION BY `td__2s0`.`row_id`) AS `td__2ssb`
  FROM `td__2x` AS `td__2s0`
), `td__2tail` AS (
  SELECT
    `td__2t0`.*,
    CASE
      WHEN `td__2r0` IS NULL
      THEN NULL
      WHEN `td__2r0` >= 1.0
      THEN `td__2sss0` / NULLIF(`td__2sgw` + `td__2ssb`, 0.0)
      ELSE (
        `td__2sgg0` + `td__2ssb`
      ) / NULLIF(`td__2sgw` + `td__2ssb`, 0.0)
    END AS `td__2t20`,
    `td__2sgw` + `td__2ssb` AS `td__2w`
  FROM `td__2sums` AS `td__2t0`
  WHERE
    `td__2t0`.`td__2j` = 0
), `td__step2` AS (
  SELECT
    `td__st2`.*,
    `td__q1_0` + 2.0 * (
      0.5 * `td__2t20` - `td__p0`
    ) / NULLIF(
      2.0 * CASE
        WHEN (
          0.5 * (
            `td__dfp` + 1.0
          ) * `td__2lnx0` - LN(2.0 * SQRT(`td__dfp`) * `td__2w`)
        ) < -700.0
        THEN 0.0
        ELSE EXP(0.5 * (
          `td__dfp` + 1.0
        ) * `td__2lnx0` - LN(2.0 * SQRT(`td__dfp`) * `td__2w`))
      END - (
        0.5 * `td__2t20` - `td__p0`
      ) * (
        `td__dfp` + 1.0
      ) * `td__q1_0` / NULLIF(
        `td__dfp` + CASE WHEN ABS(`td__q1_0`) < 1e-100 THEN 0.0 ELSE `td__q1_0` * `td__q1_0` END,
        0.0
      ),
      0.0
    ) AS `td__q2_0`,
    COUNT(*) OVER (PARTITION BY `td__st2`.`row_id`) AS `td__barrier_s2`
  FROM `td__2tail` AS `td__st2`
), `td__closed` AS (
  SELECT
    `td__cl`.*,
    CASE
      WHEN `td__df` IS NULL
      OR `td__df` <= 0.0
      OR (
        `td__df` < 2.0 AND `td__df` <> FLOOR(`td__df`)
      )
      THEN NULL
      WHEN `td__df` = 1.0
      THEN CASE
        WHEN `td__1r0` <= 1.0
        THEN 1.0 - 0.6366197723675814 * ATAN(`td__1r0`)
        ELSE 0.6366197723675814 * ATAN(1.0 / `td__1r0`)
      END
      WHEN `td__df` = 2.0
      THEN CASE
        WHEN `td__1r0` < 1e-100
        THEN 1.0
        WHEN `td__1r0` > 1e150
        THEN 0.0
        ELSE 1.0 / (
          SQRT(1.0 + `td__1r0` * `td__1r0`) * (
            SQRT(1.0 + `td__1r0` * `td__1r0`) + `td__1r0`
          )
        )
      END
      ELSE `td__1t20`
    END AS `td__rt2_0`,
    CASE
      WHEN `td__df` IS NULL
      OR `td__df` <= 0.0
      OR (
        `td__df` < 2.0 AND `td__df` <> FLOOR(`td__df`)
      )
      THEN NULL
      WHEN `td__df` = 1.0
      THEN CASE
        WHEN `td__1r1` <= 1.0
        THEN 1.0 - 0.6366197723675814 * ATAN(`td__1r1`)
        ELSE 0.6366197723675814 * ATAN(1.0 / `td__1r1`)
      END
      WHEN `td__df` = 2.0
      THEN CASE
        WHEN `td__1r1` < 1e-100
        THEN 1.0
        WHEN `td__1r1` > 1e150
        THEN 0.0
        ELSE 1.0 / (
          SQRT(1.0 + `td__1r1` * `td__1r1`) * (
            SQRT(1.0 + `td__1r1` * `td__1r1`) + `td__1r1`
          )
        )
      END
      ELSE `td__1t21`
    END AS `td__rt2_1`,
    COUNT(*) OVER (PARTITION BY `td__cl`.`row_id`) AS `td__barrier_c`
  FROM `td__step2` AS `td__cl`
), `td` AS (
  SELECT
    `td__fin`.*,
    CASE WHEN `td__t0` >= 0.0 THEN 1.0 - 0.5 * `td__rt2_0` ELSE 0.5 * `td__rt2_0` END AS `main_t_lower`,
    CASE WHEN `td__t0` >= 0.0 THEN 0.5 * `td__rt2_0` ELSE 1.0 - 0.5 * `td__rt2_0` END AS `main_t_upper`,
    CASE
      WHEN `td__t0` IS NULL OR `td__df` IS NULL
      THEN NULL
      WHEN `td__df` <= 0.0
      THEN 'df not positive: no t distribution'
      WHEN `td__df` < 2.0 AND `td__df` <> FLOOR(`td__df`)
      THEN 'df below 2: use the exact Python readout'
    END AS `main_t_note`,
    CASE WHEN `td__t1` >= 0.0 THEN 1.0 - 0.5 * `td__rt2_1` ELSE 0.5 * `td__rt2_1` END AS `margin_t_lower`,
    CASE WHEN `td__t1` >= 0.0 THEN 0.5 * `td__rt2_1` ELSE 1.0 - 0.5 * `td__rt2_1` END AS `margin_t_upper`,
    CASE
      WHEN `td__t1` IS NULL OR `td__df` IS NULL
      THEN NULL
      WHEN `td__df` <= 0.0
      THEN 'df not positive: no t distribution'
      WHEN `td__df` < 2.0 AND `td__df` <> FLOOR(`td__df`)
      THEN 'df below 2: use the exact Python readout'
    END AS `margin_t_note`,
    CASE
      WHEN `td__p0` IS NULL OR `td__n` IS NULL
      THEN NULL
      WHEN `td__q0` = 0.5
      THEN 0.0
      WHEN `td__q0` < 0.5
      THEN -`td__q2_0`
      ELSE `td__q2_0`
    END AS `critical_t_value`
  FROM `td__closed` AS `td__fin`
), `normal_inputs` AS (
  SELECT
    *,
    CASE
      WHEN `abs_statistic` >= 3.0
      THEN 1.0 / (
        `abs_statistic` * `abs_statistic`
      )
    END AS `abs_statistic_inv_sq`,
    CASE
      WHEN `abs_margin_statistic` >= 3.0
      THEN 1.0 / (
        `abs_margin_statistic` * `abs_margin_statistic`
      )
    END AS `abs_margin_inv_sq`,
    COUNT(*) OVER (PARTITION BY `row_id`) AS `normal_barrier`
  FROM `td`
), `normal_tails` AS (
  SELECT
    *,
    CASE
      WHEN `abs_statistic` > 38.0
      THEN 0.0
      ELSE CASE
        WHEN `abs_statistic` < 3.0
        THEN EXP(-0.5 * `abs_statistic` * `abs_statistic`) * (
          (
            (
              (
                (
                  (
                    0.0352624965998911 * `abs_statistic` + 0.700383064443688
                  ) * `abs_statistic` + 6.37396220353165
                ) * `abs_statistic` + 33.912866078383
              ) * `abs_statistic` + 112.079291497871
            ) * `abs_statistic` + 221.213596169931
          ) * `abs_statistic` + 220.206867912376
        ) / (
          (
            (
              (
                (
                  (
                    (
                      0.0883883476483184 * `abs_statistic` + 1.75566716318264
                    ) * `abs_statistic` + 16.064177579207
                  ) * `abs_statistic` + 86.7807322029461
                ) * `abs_statistic` + 296.564248779674
              ) * `abs_statistic` + 637.333633378831
            ) * `abs_statistic` + 793.826512519948
          ) * `abs_statistic` + 440.413735824752
        )
        ELSE EXP(-0.5 * `abs_statistic` * `abs_statistic`) * 0.3989422804014327 * (
          EXP(-1.779355901402371 - 0.0024879380188789694 * `abs_statistic_inv_sq`) + EXP(-1.2335582973695354 - 0.06923918433800227 * `abs_statistic_inv_sq`) + EXP(-1.3216829568871193 - 0.4200613752963293 * `abs_statistic_inv_sq`) + EXP(-1.7957527120028594 - 1.457447795446018 * `abs_statistic_inv_sq`) + EXP(-2.592588996560229 - 3.7790482726969685 * `abs_statistic_inv_sq`) + EXP(-3.6903037756070773 - 8.196898098571257 * `abs_statistic_inv_sq`) + EXP(-5.082794644999896 - 15.765094976695384 * `abs_statistic_inv_sq`) + EXP(-6.77238349275405 - 27.818470687084773 * `abs_statistic_inv_sq`) + EXP(-8.767311223343135 - 46.026187267934304 * `abs_statistic_inv_sq`) + EXP(-11.081049490244487 - 72.46638338239725 * `abs_statistic_inv_sq`) + EXP(-13.732561585402326 - 109.73164510218608 * `abs_statistic_inv_sq`) + EXP(-16.747306821312094 - 161.08142520326024 * `abs_statistic_inv_sq`) + EXP(-20.159099743627795 - 230.6691721355028 * `abs_statistic_inv_sq`) + EXP(-24.01323430703992 - 323.89458753635904 * `abs_statistic_inv_sq`) + EXP(-28.371778014826944 - 447.97891338987085 * `abs_statistic_inv_sq`) + EXP(-33.32302001737664 - 612.9702886561737 * `abs_statistic_inv_sq`) + EXP(-38.99983382185025 - 833.6692742990255 * `abs_statistic_inv_sq`) + EXP(-45.62022978993104 - 1133.8319165346581 * `abs_statistic_inv_sq`) + EXP(-53.59689666481805 - 1557.4224611276752 * `abs_statistic_inv_sq`) + EXP(-63.967701853691906 - 2212.7489970368088 * `abs_statistic_inv_sq`)
        ) / `abs_statistic`
      END
    END AS `main_z_tail`,
    CASE
      WHEN `abs_margin_statistic` > 38.0
      THEN 0.0
      ELSE CASE
        WHEN `abs_margin_statistic` < 3.0
        THEN EXP(-0.5 * `abs_margin_statistic` * `abs_margin_statistic`) * (
          (
            (
              (
                (
                  (
                    0.0352624965998911 * `abs_margin_statistic` + 0.700383064443688
                  ) * `abs_margin_statistic` + 6.37396220353165
                ) * `abs_margin_statistic` + 33.912866078383
              ) * `abs_margin_statistic` + 112.079291497871
            ) * `abs_margin_statistic` + 221.213596169931
          ) * `abs_margin_statistic` + 220.206867912376
        ) / (
          (
            (
              (
                (
                  (
                    (
                      0.0883883476483184 * `abs_margin_statistic` + 1.75566716318264
                    ) * `abs_margin_statistic` + 16.064177579207
                  ) * `abs_margin_statistic` + 86.7807322029461
                ) * `abs_margin_statistic` + 296.564248779674
              ) * `abs_margin_statistic` + 637.333633378831
            ) * `abs_margin_statistic` + 793.826512519948
          ) * `abs_margin_statistic` + 440.413735824752
        )
        ELSE EXP(-0.5 * `abs_margin_statistic` * `abs_margin_statistic`) * 0.3989422804014327 * (
          EXP(-1.779355901402371 - 0.0024879380188789694 * `abs_margin_inv_sq`) + EXP(-1.2335582973695354 - 0.06923918433800227 * `abs_margin_inv_sq`) + EXP(-1.3216829568871193 - 0.4200613752963293 * `abs_margin_inv_sq`) + EXP(-1.7957527120028594 - 1.457447795446018 * `abs_margin_inv_sq`) + EXP(-2.592588996560229 - 3.7790482726969685 * `abs_margin_inv_sq`) + EXP(-3.6903037756070773 - 8.196898098571257 * `abs_margin_inv_sq`) + EXP(-5.082794644999896 - 15.765094976695384 * `abs_margin_inv_sq`) + EXP(-6.77238349275405 - 27.818470687084773 * `abs_margin_inv_sq`) + EXP(-8.767311223343135 - 46.026187267934304 * `abs_margin_inv_sq`) + EXP(-11.081049490244487 - 72.46638338239725 * `abs_margin_inv_sq`) + EXP(-13.732561585402326 - 109.73164510218608 * `abs_margin_inv_sq`) + EXP(-16.747306821312094 - 161.08142520326024 * `abs_margin_inv_sq`) + EXP(-20.159099743627795 - 230.6691721355028 * `abs_margin_inv_sq`) + EXP(-24.01323430703992 - 323.89458753635904 * `abs_margin_inv_sq`) + EXP(-28.371778014826944 - 447.97891338987085 * `abs_margin_inv_sq`) + EXP(-33.32302001737664 - 612.9702886561737 * `abs_margin_inv_sq`) + EXP(-38.99983382185025 - 833.6692742990255 * `abs_margin_inv_sq`) + EXP(-45.62022978993104 - 1133.8319165346581 * `abs_margin_inv_sq`) + EXP(-53.59689666481805 - 1557.4224611276752 * `abs_margin_inv_sq`) + EXP(-63.967701853691906 - 2212.7489970368088 * `abs_margin_inv_sq`)
        ) / `abs_margin_statistic`
      END
    END AS `margin_z_tail`
  FROM `normal_inputs`
), `tested` AS (
  SELECT
    *,
    CASE
      WHEN `statistic` IS NULL
      THEN NULL
      WHEN `df` IS NULL
      THEN 2 * `main_z_tail`
      ELSE 2 * `main_t_upper`
    END AS `p_value`,
    CASE
      WHEN `margin_statistic` IS NULL
      THEN NULL
      WHEN `df` IS NULL
      THEN CASE
        WHEN `margin_statistic` >= 0
        THEN `margin_z_tail`
        ELSE 1.0 - `margin_z_tail`
      END
      ELSE `margin_t_upper`
    END AS `margin_p_value`,
    CASE
      WHEN `df` IS NULL
      THEN CAST(1.9599639845400536 AS DOUBLE)
      ELSE `critical_t_value`
    END AS `critical_value`,
    CAST(1.9599639845400536 AS DOUBLE) AS `critical_z_value`,
    COALESCE(`main_t_note`, `margin_t_note`) AS `p_value_note`,
    CASE
      WHEN `method` = 'two_proportion_z'
      AND (
        `total` < 10
        OR `n` - `total` < 10
        OR `control_total` < 10
        OR `control_n` - `control_total` < 10
      )
      THEN 'fewer than 10 successes or failures in an arm: the Python readout uses the exact test and a score interval for the lift, so no lift interval is shown here'
    END AS `method_note`
  FROM `normal_tails`
), `families` AS (
  SELECT
    *,
    CASE `family`
      WHEN 'primary'
      THEN 'none'
      WHEN 'secondary'
      THEN 'bh'
      WHEN 'guardrail'
      THEN 'none'
      WHEN 'segment'
      THEN 'bh'
    END AS `correction`,
    CASE WHEN `family` = 'guardrail' THEN `margin_p_value` ELSE `p_value` END AS `family_p_value`
  FROM `tested`
), `ranked` AS (
  SELECT
    *,
    ROW_NUMBER() OVER (
      PARTITION BY `family`
      ORDER BY CASE WHEN CASE WHEN `family_p_value` IS NULL THEN 1 ELSE 0 END IS NULL THEN 1 ELSE 0 END, CASE WHEN `family_p_value` IS NULL THEN 1 ELSE 0 END, CASE WHEN `family_p_value` IS NULL THEN 1 ELSE 0 END, `family_p_value`, CASE WHEN `row_id` IS NULL THEN 1 ELSE 0 END, `row_id`
    ) AS `p_rank`,
    COUNT(`family_p_value`) OVER (PARTITION BY `family`) AS `family_size`
  FROM `families`
), `adjusted_p` AS (
  SELECT
    *,
    CASE
      WHEN `family_p_value` IS NULL
      THEN NULL
      WHEN `correction` = 'holm'
      THEN MAX(
        CASE
          WHEN (
            `family_size` - `p_rank` + 1
          ) * `family_p_value` > 1
          THEN 1.0
          ELSE (
            `family_size` - `p_rank` + 1
          ) * `family_p_value`
        END
      ) OVER (
        PARTITION BY `family`
        ORDER BY `p_rank`
        ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
      )
      WHEN `correction` = 'bh'
      THEN MIN(
        CASE
          WHEN `family_size` * `family_p_value` / `p_rank` > 1
          THEN 1.0
          ELSE `family_size` * `family_p_value` / `p_rank`
        END
      ) OVER (
        PARTITION BY `family`
        ORDER BY `p_rank`
        ROWS BETWEEN CURRENT ROW AND UNBOUNDED FOLLOWING
      )
      ELSE `family_p_value`
    END AS `family_p_adjusted`
  FROM `ranked`
), `judged` AS (
  SELECT
    *,
    CASE WHEN `family` = 'guardrail' THEN `p_value` ELSE `family_p_adjusted` END AS `p_value_adjusted`,
    CASE WHEN `family` = 'guardrail' THEN `margin_p_value` END AS `guardrail_p_value`,
    CASE WHEN `family` = 'guardrail' THEN `family_p_adjusted` END AS `guardrail_p_adjusted`,
    CASE
      WHEN CASE WHEN `family` = 'guardrail' THEN `p_value` ELSE `family_p_adjusted` END < 0.05
      THEN 1
      ELSE 0
    END AS `significant`,
    CASE
      WHEN `family` <> 'guardrail'
      THEN NULL
      WHEN `family_p_adjusted` < 0.05
      THEN 1
      ELSE 0
    END AS `guardrail_held`,
    CASE
      WHEN `family` <> 'guardrail'
      THEN NULL
      WHEN `p_value` < 0.05
      AND (
        (
          `direction` = 'higher' AND `estimate` < 0
        )
        OR (
          `direction` = 'lower' AND `estimate` > 0
        )
      )
      THEN 1
      ELSE 0
    END AS `guardrail_harm`
  FROM `adjusted_p`
), `signals` AS (
  SELECT
    *,
    CASE
      WHEN `segment_index` = 0
      AND `family` = 'primary'
      AND `significant` = 1
      AND NOT `direction` IS NULL
      THEN CASE
        WHEN (
          `direction` = 'higher' AND `estimate` > 0
        )
        OR (
          `direction` = 'lower' AND `estimate` < 0
        )
        THEN 1
        ELSE -1
      END
      ELSE 0
    END AS `primary_signal`,
    CASE WHEN `segment_index` = 0 AND `guardrail_harm` = 1 THEN 1 ELSE 0 END AS `harm_signal`,
    CASE
      WHEN `segment_index` = 0 AND `guardrail_held` = 0 AND `guardrail_harm` = 0
      THEN 1
      ELSE 0
    END AS `unproven_signal`
  FROM `judged`
), `readout` AS (
  SELECT
    *,
    CASE
      WHEN `srm_p_value` < 0.001
      THEN 'invalid'
      WHEN MAX(`harm_signal`) OVER (PARTITION BY `arm`) = 1
      OR MIN(`primary_signal`) OVER (PARTITION BY `arm`) = -1
      THEN 'unfavourable'
      WHEN MAX(`primary_signal`) OVER (PARTITION BY `arm`) = 1
      AND MAX(`unproven_signal`) OVER (PARTITION BY `arm`) = 0
      THEN 'favourable'
      ELSE 'unclear'
    END AS `verdict`,
    CASE
      WHEN `srm_p_value` < 0.001
      THEN 'sample-ratio mismatch: assignment or logging is broken, so read nothing until it is explained'
      WHEN MAX(`harm_signal`) OVER (PARTITION BY `arm`) = 1
      THEN 'a guardrail got significantly worse'
      WHEN MIN(`primary_signal`) OVER (PARTITION BY `arm`) = -1
      THEN 'the primary metric got significantly worse'
      WHEN MAX(`primary_signal`) OVER (PARTITION BY `arm`) = 1
      AND MAX(`unproven_signal`) OVER (PARTITION BY `arm`) = 0
      THEN 'the primary metric improved and every guardrail held'
      WHEN MAX(`primary_signal`) OVER (PARTITION BY `arm`) = 1
      THEN 'the primary metric improved, but a guardrail is not yet shown within its margin'
      ELSE 'no significant change in the primary metric: keep collecting to the planned size, or stop'
    END AS `verdict_reason`
  FROM `signals`
)
SELECT
  `metric`,
  `kind`,
  `role`,
  `method` AS `test`,
  `segment`,
  `segment_value`,
  `arm`,
  `n`,
  `value`,
  `control_n`,
  `control_value`,
  `estimate`,
  `std_error`,
  `statistic`,
  `df`,
  `p_value`,
  `estimate` - `critical_value` * `std_error` AS `ci_low`,
  `estimate` + `critical_value` * `std_error` AS `ci_high`,
  `relative_lift`,
  CASE
    WHEN `method_note` IS NULL
    THEN `relative_lift` - `critical_z_value` * `lift_std_error`
  END AS `lift_ci_low`,
  CASE
    WHEN `method_note` IS NULL
    THEN `relative_lift` + `critical_z_value` * `lift_std_error`
  END AS `lift_ci_high`,
  `correction`,
  `p_value_adjusted`,
  `significant`,
  `guardrail_p_value`,
  `guardrail_p_adjusted`,
  `guardrail_held`,
  `guardrail_harm`,
  `verdict`,
  `verdict_reason`,
  `srm_chi_square`,
  `srm_p_value`,
  COALESCE(`p_value_note`, `method_note`) AS `note`,
  `always_valid_p_value`,
  `sequence_low`,
  `sequence_high`
FROM `readout`
ORDER BY
  CASE WHEN `metric_index` IS NULL THEN 1 ELSE 0 END, `metric_index`,
  CASE WHEN `segment_index` IS NULL THEN 1 ELSE 0 END, `segment_index`,
  CASE WHEN `segment_value` IS NULL THEN 1 ELSE 0 END, `segment_value`,
  CASE WHEN `arm` IS NULL THEN 1 ELSE 0 END, `arm`
