WITH `unit_rows` AS (
  SELECT
    `member_id` AS `unit_id`,
    CAST(NULL AS STRING) AS `arm_label`,
    CAST(NULL AS DATE) AS `entry_day`,
    CAST(`happened_at` AS DATE) AS `event_day`,
    COUNT(*) AS `inc_rows`,
    SUM(CAST(`amount` AS DOUBLE)) AS `inc_0`,
    COUNT(`amount`) AS `inc_1`,
    COUNT(*) AS `inc_2`
  FROM `lab`.`events` AS `event_rows`
  GROUP BY
    `member_id`,
    CAST(`happened_at` AS DATE)
  UNION ALL
  SELECT
    `member_id` AS `unit_id`,
    CAST(`arm` AS STRING) AS `arm_label`,
    CAST(`entered_at` AS DATE) AS `entry_day`,
    CAST(NULL AS DATE) AS `event_day`,
    0 AS `inc_rows`,
    NULL AS `inc_0`,
    NULL AS `inc_1`,
    NULL AS `inc_2`
  FROM `lab`.`assignments` AS `assignment_rows`
), `unit_placed` AS (
  SELECT
    `unit_id`,
    `event_day`,
    MIN(`entry_day`) OVER (PARTITION BY `unit_id`) AS `entry_day`,
    MIN(`arm_label`) OVER (PARTITION BY `unit_id`) AS `arm_low`,
    MAX(`arm_label`) OVER (PARTITION BY `unit_id`) AS `arm_high`,
    `inc_rows`,
    `inc_0`,
    `inc_1`,
    `inc_2`
  FROM `unit_rows`
), `unit_days` AS (
  SELECT
    `unit_id`,
    CASE WHEN `arm_low` = `arm_high` THEN `arm_low` END AS `arm_label`,
    `entry_day`,
    CASE
      WHEN `event_day` IS NULL OR `event_day` < `entry_day`
      THEN `entry_day`
      ELSE `event_day`
    END AS `day`,
    SUM(`inc_rows`) AS `inc_rows`,
    SUM(`inc_0`) AS `inc_0`,
    SUM(`inc_1`) AS `inc_1`,
    SUM(`inc_2`) AS `inc_2`
  FROM `unit_placed`
  WHERE
    NOT `entry_day` IS NULL
  GROUP BY
    `unit_id`,
    `arm_low`,
    `arm_high`,
    `entry_day`,
    CASE
      WHEN `event_day` IS NULL OR `event_day` < `entry_day`
      THEN `entry_day`
      ELSE `event_day`
    END
), `unit_states` AS (
  SELECT
    `unit_id`,
    `arm_label`,
    `day`,
    CASE WHEN `day` = `entry_day` THEN 1 ELSE 0 END AS `entering`,
    SUM(`inc_rows`) OVER (
      PARTITION BY `unit_id`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `after_rows`,
    SUM(`inc_rows`) OVER (
      PARTITION BY `unit_id`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND 1 PRECEDING
    ) AS `before_rows`,
    SUM(`inc_0`) OVER (
      PARTITION BY `unit_id`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `after_0`,
    SUM(`inc_0`) OVER (
      PARTITION BY `unit_id`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND 1 PRECEDING
    ) AS `before_0`,
    SUM(`inc_1`) OVER (
      PARTITION BY `unit_id`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `after_1`,
    SUM(`inc_1`) OVER (
      PARTITION BY `unit_id`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND 1 PRECEDING
    ) AS `before_1`,
    SUM(`inc_2`) OVER (
      PARTITION BY `unit_id`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `after_2`,
    SUM(`inc_2`) OVER (
      PARTITION BY `unit_id`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND 1 PRECEDING
    ) AS `before_2`
  FROM `unit_days`
), `unit_values` AS (
  SELECT
    `arm_label`,
    `day`,
    `entering`,
    COALESCE(
      CAST(CASE WHEN `after_rows` > 0 THEN CASE WHEN `after_1` > 0 THEN `after_0` END END AS DOUBLE),
      0.0
    ) AS `v1_0`,
    CASE
      WHEN `entering` = 0
      THEN COALESCE(
        CAST(CASE WHEN `before_rows` > 0 THEN CASE WHEN `before_1` > 0 THEN `before_0` END END AS DOUBLE),
        0.0
      )
    END AS `v0_0`,
    COALESCE(
      CAST(CASE WHEN `after_rows` > 0 THEN CASE WHEN `after_2` > 0 THEN 1 ELSE 0 END END AS DOUBLE),
      0.0
    ) AS `v1_1`,
    CASE
      WHEN `entering` = 0
      THEN COALESCE(
        CAST(CASE WHEN `before_rows` > 0 THEN CASE WHEN `before_2` > 0 THEN 1 ELSE 0 END END AS DOUBLE),
        0.0
      )
    END AS `v0_1`,
    COALESCE(
      CAST(CASE WHEN `after_rows` > 0 THEN CASE WHEN `after_1` > 0 THEN `after_0` END END AS DOUBLE),
      0.0
    ) AS `v1_2`,
    CASE
      WHEN `entering` = 0
      THEN COALESCE(
        CAST(CASE WHEN `before_rows` > 0 THEN CASE WHEN `before_1` > 0 THEN `before_0` END END AS DOUBLE),
        0.0
      )
    END AS `v0_2`,
    COALESCE(CAST(CASE WHEN `after_rows` > 0 THEN `after_2` END AS DOUBLE), 0.0) AS `v1_3`,
    CASE
      WHEN `entering` = 0
      THEN COALESCE(CAST(CASE WHEN `before_rows` > 0 THEN `before_2` END AS DOUBLE), 0.0)
    END AS `v0_3`
  FROM `unit_states`
), `unit_shifted` AS (
  SELECT
    `arm_label`,
    `day`,
    `entering`,
    AVG(`v1_0`) OVER (PARTITION BY `arm_label`) AS `c_0`,
    `v1_0` - AVG(`v1_0`) OVER (PARTITION BY `arm_label`) AS `y1_0`,
    `v0_0` - AVG(`v1_0`) OVER (PARTITION BY `arm_label`) AS `y0_0`,
    AVG(`v1_1`) OVER (PARTITION BY `arm_label`) AS `c_1`,
    `v1_1` - AVG(`v1_1`) OVER (PARTITION BY `arm_label`) AS `y1_1`,
    `v0_1` - AVG(`v1_1`) OVER (PARTITION BY `arm_label`) AS `y0_1`,
    CASE WHEN `v1_1` IS NULL OR `v1_1` = 0 OR `v1_1` = 1 THEN 0 ELSE 1 END - CASE WHEN `v0_1` IS NULL OR `v0_1` = 0 OR `v0_1` = 1 THEN 0 ELSE 1 END AS `invalid_change_1`,
    AVG(`v1_2`) OVER (PARTITION BY `arm_label`) AS `c_2`,
    `v1_2` - AVG(`v1_2`) OVER (PARTITION BY `arm_label`) AS `y1_2`,
    `v0_2` - AVG(`v1_2`) OVER (PARTITION BY `arm_label`) AS `y0_2`,
    AVG(`v1_3`) OVER (PARTITION BY `arm_label`) AS `c_3`,
    `v1_3` - AVG(`v1_3`) OVER (PARTITION BY `arm_label`) AS `y1_3`,
    `v0_3` - AVG(`v1_3`) OVER (PARTITION BY `arm_label`) AS `y0_3`
  FROM `unit_values`
), `arm_day_changes` AS (
  SELECT
    `arm_label`,
    `day`,
    CASE
      WHEN `arm_label` IS NULL
      THEN 0
      WHEN DENSE_RANK() OVER (PARTITION BY CASE WHEN `arm_label` IS NULL THEN 1 ELSE 0 END ORDER BY `arm_label`) > 63
      THEN 0
      ELSE DENSE_RANK() OVER (PARTITION BY CASE WHEN `arm_label` IS NULL THEN 1 ELSE 0 END ORDER BY `arm_label`)
    END AS `slot`,
    SUM(`entering`) AS `d_units`,
    MAX(`c_0`) AS `c_0`,
    SUM(
      CASE WHEN `y1_0` IS NULL THEN 0 ELSE 1 END - CASE WHEN `y0_0` IS NULL THEN 0 ELSE 1 END
    ) AS `d_n_0`,
    SUM(COALESCE(`y1_0`, 0) - COALESCE(`y0_0`, 0)) AS `d_s_0`,
    SUM(COALESCE(`y1_0` * `y1_0`, 0) - COALESCE(`y0_0` * `y0_0`, 0)) AS `d_q_0`,
    MAX(`c_1`) AS `c_1`,
    SUM(
      CASE WHEN `y1_1` IS NULL THEN 0 ELSE 1 END - CASE WHEN `y0_1` IS NULL THEN 0 ELSE 1 END
    ) AS `d_n_1`,
    SUM(COALESCE(`y1_1`, 0) - COALESCE(`y0_1`, 0)) AS `d_s_1`,
    SUM(COALESCE(`y1_1` * `y1_1`, 0) - COALESCE(`y0_1` * `y0_1`, 0)) AS `d_q_1`,
    SUM(`invalid_change_1`) AS `d_invalid_1`,
    MAX(`c_2`) AS `c_2`,
    SUM(
      CASE WHEN `y1_2` IS NULL THEN 0 ELSE 1 END - CASE WHEN `y0_2` IS NULL THEN 0 ELSE 1 END
    ) AS `d_n_2`,
    SUM(COALESCE(`y1_2`, 0) - COALESCE(`y0_2`, 0)) AS `d_s_2`,
    SUM(COALESCE(`y1_2` * `y1_2`, 0) - COALESCE(`y0_2` * `y0_2`, 0)) AS `d_q_2`,
    MAX(`c_3`) AS `c_3`,
    SUM(
      CASE WHEN `y1_3` IS NULL THEN 0 ELSE 1 END - CASE WHEN `y0_3` IS NULL THEN 0 ELSE 1 END
    ) AS `d_n_3`,
    SUM(COALESCE(`y1_3`, 0) - COALESCE(`y0_3`, 0)) AS `d_s_3`,
    SUM(COALESCE(`y1_3` * `y1_3`, 0) - COALESCE(`y0_3` * `y0_3`, 0)) AS `d_q_3`,
    SUM(COALESCE(`y1_2` * `y1_3`, 0) - COALESCE(`y0_2` * `y0_3`, 0)) AS `d_p_2_3`
  FROM `unit_shifted`
  GROUP BY
    `arm_label`,
    `day`
), `arm_slots` AS (
  SELECT
    `slot`
  FROM VALUES
    (0),
    (1),
    (2),
    (3),
    (4),
    (5),
    (6),
    (7),
    (8),
    (9),
    (10),
    (11),
    (12),
    (13),
    (14),
    (15),
    (16),
    (17),
    (18),
    (19),
    (20),
    (21),
    (22),
    (23),
    (24),
    (25),
    (26),
    (27),
    (28),
    (29),
    (30),
    (31),
    (32),
    (33),
    (34),
    (35),
    (36),
    (37),
    (38),
    (39),
    (40),
    (41),
    (42),
    (43),
    (44),
    (45),
    (46),
    (47),
    (48),
    (49),
    (50),
    (51),
    (52),
    (53),
    (54),
    (55),
    (56),
    (57),
    (58),
    (59),
    (60),
    (61),
    (62),
    (63) AS `arm_slots__rows`(`slot`)
), `arm_days` AS (
  SELECT
    `ch`.`day` AS `day`,
    `s`.`slot` AS `slot`,
    MAX(CASE WHEN `ch`.`slot` = `s`.`slot` THEN 1 ELSE 0 END) AS `present`,
    MAX(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`arm_label` END) AS `arm_label`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_units` ELSE 0 END) AS `d_units`,
    MAX(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`c_0` END) AS `c_0`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_n_0` ELSE 0 END) AS `d_n_0`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_s_0` ELSE 0 END) AS `d_s_0`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_q_0` ELSE 0 END) AS `d_q_0`,
    MAX(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`c_1` END) AS `c_1`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_n_1` ELSE 0 END) AS `d_n_1`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_s_1` ELSE 0 END) AS `d_s_1`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_q_1` ELSE 0 END) AS `d_q_1`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_invalid_1` ELSE 0 END) AS `d_invalid_1`,
    MAX(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`c_2` END) AS `c_2`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_n_2` ELSE 0 END) AS `d_n_2`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_s_2` ELSE 0 END) AS `d_s_2`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_q_2` ELSE 0 END) AS `d_q_2`,
    MAX(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`c_3` END) AS `c_3`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_n_3` ELSE 0 END) AS `d_n_3`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_s_3` ELSE 0 END) AS `d_s_3`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_q_3` ELSE 0 END) AS `d_q_3`,
    SUM(CASE WHEN `ch`.`slot` = `s`.`slot` THEN `ch`.`d_p_2_3` ELSE 0 END) AS `d_p_2_3`
  FROM `arm_day_changes` AS `ch`
  CROSS JOIN `arm_slots` AS `s`
  GROUP BY
    `ch`.`day`,
    `s`.`slot`
), `cumulative` AS (
  SELECT
    `day`,
    MAX(`present`) OVER (PARTITION BY `slot`) AS `used`,
    MAX(`arm_label`) OVER (PARTITION BY `slot`) AS `arm_label`,
    CAST(SUM(`d_units`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS DOUBLE) AS `units`,
    MAX(`c_0`) OVER (PARTITION BY `slot`) AS `c_0`,
    CAST(SUM(`d_n_0`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS DOUBLE) AS `n_0`,
    SUM(`d_s_0`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `s_0`,
    SUM(`d_q_0`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `q_0`,
    MAX(`c_1`) OVER (PARTITION BY `slot`) AS `c_1`,
    CAST(SUM(`d_n_1`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS DOUBLE) AS `n_1`,
    SUM(`d_s_1`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `s_1`,
    SUM(`d_q_1`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `q_1`,
    CAST(SUM(`d_invalid_1`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS DOUBLE) AS `invalid_1`,
    MAX(`c_2`) OVER (PARTITION BY `slot`) AS `c_2`,
    CAST(SUM(`d_n_2`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS DOUBLE) AS `n_2`,
    SUM(`d_s_2`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `s_2`,
    SUM(`d_q_2`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `q_2`,
    MAX(`c_3`) OVER (PARTITION BY `slot`) AS `c_3`,
    CAST(SUM(`d_n_3`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS DOUBLE) AS `n_3`,
    SUM(`d_s_3`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `s_3`,
    SUM(`d_q_3`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `q_3`,
    SUM(`d_p_2_3`) OVER (
      PARTITION BY `slot`
      ORDER BY `day`
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `p_2_3`
  FROM `arm_days`
), `arm_stats` AS (
  SELECT
    `day`,
    `arm_label`,
    0 AS `segment_index`,
    CAST(NULL AS STRING) AS `segment`,
    '(all)' AS `segment_value`,
    `units`,
    `n_0`,
    CASE WHEN `n_0` > 0 THEN `c_0` + `s_0` / `n_0` END AS `mean_0`,
    CASE
      WHEN `n_0` < 2
      THEN NULL
      WHEN `q_0` - `s_0` * `s_0` / `n_0` < 0
      THEN 0.0
      ELSE (
        `q_0` - `s_0` * `s_0` / `n_0`
      ) / (
        `n_0` - 1
      )
    END AS `variance_0`,
    `n_1`,
    CASE WHEN `n_1` > 0 THEN `c_1` + `s_1` / `n_1` END AS `mean_1`,
    CASE
      WHEN `n_1` < 2
      THEN NULL
      WHEN `q_1` - `s_1` * `s_1` / `n_1` < 0
      THEN 0.0
      ELSE (
        `q_1` - `s_1` * `s_1` / `n_1`
      ) / (
        `n_1` - 1
      )
    END AS `variance_1`,
    `invalid_1`,
    `n_2`,
    CASE WHEN `n_2` > 0 THEN `c_2` + `s_2` / `n_2` END AS `mean_2`,
    CASE
      WHEN `n_2` < 2
      THEN NULL
      WHEN `q_2` - `s_2` * `s_2` / `n_2` < 0
      THEN 0.0
      ELSE (
        `q_2` - `s_2` * `s_2` / `n_2`
      ) / (
        `n_2` - 1
      )
    END AS `variance_2`,
    `n_3`,
    CASE WHEN `n_3` > 0 THEN `c_3` + `s_3` / `n_3` END AS `mean_3`,
    CASE
      WHEN `n_3` < 2
      THEN NULL
      WHEN `q_3` - `s_3` * `s_3` / `n_3` < 0
      THEN 0.0
      ELSE (
        `q_3` - `s_3` * `s_3` / `n_3`
      ) / (
        `n_3` - 1
      )
    END AS `variance_3`,
    CASE
      WHEN `n_2` < 2
      THEN NULL
      ELSE (
        `p_2_3` - `s_2` * `s_3` / `n_2`
      ) / (
        `n_2` - 1
      )
    END AS `covariance_2_3`
  FROM `cumulative`
  WHERE
    `used` = 1
), `metric_list` AS (
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
    `target`
  FROM VALUES
    (
      0,
      'spend',
      'mean',
      'primary',
      'welch_t',
      CAST(NULL AS DOUBLE),
      'higher',
      CAST(NULL AS DOUBLE),
      CAST(NULL AS DOUBLE),
      CAST(NULL AS DOUBLE)
    ),
    (
      1,
      'bought',
      'proportion',
      'guardrail',
      'two_proportion_z',
      CAST(NULL AS DOUBLE),
      'higher',
      CAST(NULL AS DOUBLE),
      CAST(0.05 AS DOUBLE),
      CAST(NULL AS DOUBLE)
    ),
    (
      2,
      'spend_per_event',
      'ratio',
      'secondary',
      'ratio_delta_z',
      CAST(NULL AS DOUBLE),
      CAST(NULL AS STRING),
      CAST(NULL AS DOUBLE),
      CAST(NULL AS DOUBLE),
      CAST(NULL AS DOUBLE)
    ) AS `metric_list__rows`(`metric_index`, `metric`, `kind`, `role`, `method`, `sigma`, `direction`, `margin`, `relative_margin`, `target`)
), `per_arm` AS (
  SELECT
    `s`.`day`,
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
    `day`,
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
    SUM(CASE WHEN `arm` IS NULL THEN `units` ELSE 0 END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `excluded_units`,
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
    MAX(CASE WHEN `arm` = 'control' THEN `n` END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `control_n`,
    MAX(CASE WHEN `arm` = 'control' THEN `total` END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `control_total`,
    MAX(CASE WHEN `arm` = 'control' THEN `mean` END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `control_mean`,
    MAX(CASE WHEN `arm` = 'control' THEN `variance` END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `control_variance`,
    MAX(CASE WHEN `arm` = 'control' THEN `x_n` END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `control_x_n`,
    MAX(CASE WHEN `arm` = 'control' THEN `x_total` END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `control_x_total`,
    MAX(CASE WHEN `arm` = 'control' THEN `x_mean` END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `control_x_mean`,
    MAX(CASE WHEN `arm` = 'control' THEN `x_variance` END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `control_x_variance`,
    MAX(CASE WHEN `arm` = 'control' THEN `xy_covariance` END) OVER (PARTITION BY `day`, `metric_index`, `segment_index`, `segment_value`) AS `control_xy_covariance`
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
    `day`,
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
    CAST(NULL AS DOUBLE) AS `theta`,
    CAST(NULL AS DOUBLE) AS `variance_reduction`,
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
    CAST(NULL AS DOUBLE) AS `theta_treatment`,
    CAST(NULL AS DOUBLE) AS `theta_control`,
    MIN(`sequential_p_value`) OVER (
      PARTITION BY `metric_index`, `segment_index`, `segment_value`, `arm`
      ORDER BY `day` NULLS LAST
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `always_valid_p_value`,
    MAX(`estimate` - `sequence_half_width`) OVER (
      PARTITION BY `metric_index`, `segment_index`, `segment_value`, `arm`
      ORDER BY `day` NULLS LAST
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `sequence_low`,
    MIN(`estimate` + `sequence_half_width`) OVER (
      PARTITION BY `metric_index`, `segment_index`, `segment_value`, `arm`
      ORDER BY `day` NULLS LAST
      ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
    ) AS `sequence_high`
  FROM `monitored_p`
)
SELECT
  `day`,
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
  `value_std_error`,
  `control_n`,
  `control_total`,
  `control_mean`,
  `control_variance`,
  `control_value`,
  `control_value_std_error`,
  `difference`,
  `estimate`,
  `std_error`,
  `null_std_error`,
  `statistic`,
  `df`,
  `theta`,
  `variance_reduction`,
  `relative_lift`,
  `lift_std_error`,
  `direction`,
  `margin`,
  `relative_margin`,
  `margin_statistic`,
  `target`,
  `target_statistic`,
  `target_df`,
  `theta_treatment`,
  `theta_control`,
  `always_valid_p_value`,
  `sequence_low`,
  `sequence_high`
FROM `result`
ORDER BY
  `day` NULLS LAST,
  `metric_index` NULLS LAST,
  `segment_index` NULLS LAST,
  `segment_value` NULLS LAST,
  `is_control` DESC,
  `arm` NULLS LAST
