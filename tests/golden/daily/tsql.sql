WITH [assigned_units] AS (
  SELECT
    [member_id] AS [unit_id],
    MIN(CAST([arm] AS VARCHAR(MAX))) AS [arm_label],
    MAX(CAST([arm] AS VARCHAR(MAX))) AS [arm_label_last]
  FROM [lab].[assignments] AS [assignment_rows]
  GROUP BY
    [member_id]
), [unit_events] AS (
  SELECT
    [member_id] AS [unit_id],
    SUM(CAST([amount] AS FLOAT)) AS [raw_0],
    CASE WHEN COUNT_BIG(*) > 0 THEN 1 ELSE 0 END AS [raw_1],
    SUM(CAST([amount] AS FLOAT)) AS [raw_2],
    COUNT_BIG(*) AS [raw_3]
  FROM [lab].[events] AS [event_rows]
  GROUP BY
    [member_id]
), [unit_joined] AS (
  SELECT
    [a].[unit_id] AS [unit_id],
    [a].[arm_label] AS [arm_label],
    [a].[arm_label_last] AS [arm_label_last],
    [e].[raw_0] AS [raw_0],
    [e].[raw_1] AS [raw_1],
    [e].[raw_2] AS [raw_2],
    [e].[raw_3] AS [raw_3]
  FROM [assigned_units] AS [a]
  LEFT JOIN [unit_events] AS [e]
    ON [a].[unit_id] = [e].[unit_id]
), [unit_values] AS (
  SELECT
    CASE WHEN [arm_label] = [arm_label_last] THEN [arm_label] END AS [arm_label],
    COALESCE(CAST([raw_0] AS FLOAT), 0.0) AS [v_0],
    COALESCE(CAST([raw_1] AS FLOAT), 0.0) AS [v_1],
    COALESCE(CAST([raw_2] AS FLOAT), 0.0) AS [v_2],
    COALESCE(CAST([raw_3] AS FLOAT), 0.0) AS [v_3]
  FROM [unit_joined]
), [unit_centred] AS (
  SELECT
    [arm_label] AS [arm_label],
    [v_0] AS [v_0],
    [v_0] - AVG([v_0]) OVER (PARTITION BY [arm_label]) AS [d_0],
    [v_1] AS [v_1],
    [v_1] - AVG([v_1]) OVER (PARTITION BY [arm_label]) AS [d_1],
    [v_2] AS [v_2],
    [v_2] - AVG([v_2]) OVER (PARTITION BY [arm_label]) AS [d_2],
    [v_3] AS [v_3],
    [v_3] - AVG([v_3]) OVER (PARTITION BY [arm_label]) AS [d_3]
  FROM [unit_values]
), [arm_stats] AS (
  SELECT
    [arm_label] AS [arm_label],
    0 AS [segment_index],
    CAST(NULL AS VARCHAR(MAX)) AS [segment],
    '(all)' AS [segment_value],
    CAST(COUNT_BIG(*) AS FLOAT) AS [units],
    CAST(COUNT_BIG([v_0]) AS FLOAT) AS [n_0],
    AVG([v_0]) AS [mean_0],
    CAST((
      SUM([d_0] * [d_0]) - CAST(SUM([d_0]) * SUM([d_0]) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_0]) AS FLOAT), 0)
    ) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_0]) AS FLOAT) - 1, 0) AS [variance_0],
    CAST(COUNT_BIG([v_1]) AS FLOAT) AS [n_1],
    AVG([v_1]) AS [mean_1],
    CAST((
      SUM([d_1] * [d_1]) - CAST(SUM([d_1]) * SUM([d_1]) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_1]) AS FLOAT), 0)
    ) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_1]) AS FLOAT) - 1, 0) AS [variance_1],
    CAST(SUM(CASE WHEN [v_1] IS NULL OR [v_1] = 0 OR [v_1] = 1 THEN 0 ELSE 1 END) AS FLOAT) AS [invalid_1],
    CAST(COUNT_BIG([v_2]) AS FLOAT) AS [n_2],
    AVG([v_2]) AS [mean_2],
    CAST((
      SUM([d_2] * [d_2]) - CAST(SUM([d_2]) * SUM([d_2]) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_2]) AS FLOAT), 0)
    ) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_2]) AS FLOAT) - 1, 0) AS [variance_2],
    CAST(COUNT_BIG([v_3]) AS FLOAT) AS [n_3],
    AVG([v_3]) AS [mean_3],
    CAST((
      SUM([d_3] * [d_3]) - CAST(SUM([d_3]) * SUM([d_3]) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_3]) AS FLOAT), 0)
    ) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_3]) AS FLOAT) - 1, 0) AS [variance_3],
    CAST((
      SUM([d_2] * [d_3]) - CAST(SUM([d_2]) * SUM([d_3]) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_2] * [d_3]) AS FLOAT), 0)
    ) AS FLOAT) / NULLIF(CAST(COUNT_BIG([d_2] * [d_3]) AS FLOAT) - 1, 0) AS [covariance_2_3]
  FROM [unit_centred]
  GROUP BY
    [arm_label]
), [metric_list] AS (
  SELECT
    0 AS [metric_index],
    'spend' AS [metric],
    'mean' AS [kind],
    'primary' AS [role],
    'welch_t' AS [method],
    CAST(NULL AS FLOAT) AS [sigma],
    'higher' AS [direction],
    CAST(NULL AS FLOAT) AS [margin],
    CAST(NULL AS FLOAT) AS [relative_margin],
    CAST(NULL AS FLOAT) AS [target]
  UNION ALL
  SELECT
    1 AS [metric_index],
    'bought' AS [metric],
    'proportion' AS [kind],
    'guardrail' AS [role],
    'two_proportion_z' AS [method],
    CAST(NULL AS FLOAT) AS [sigma],
    'higher' AS [direction],
    CAST(NULL AS FLOAT) AS [margin],
    CAST(0.05 AS FLOAT) AS [relative_margin],
    CAST(NULL AS FLOAT) AS [target]
  UNION ALL
  SELECT
    2 AS [metric_index],
    'spend_per_event' AS [metric],
    'ratio' AS [kind],
    'secondary' AS [role],
    'ratio_delta_z' AS [method],
    CAST(NULL AS FLOAT) AS [sigma],
    CAST(NULL AS VARCHAR(MAX)) AS [direction],
    CAST(NULL AS FLOAT) AS [margin],
    CAST(NULL AS FLOAT) AS [relative_margin],
    CAST(NULL AS FLOAT) AS [target]
), [per_arm] AS (
  SELECT
    [m].[metric_index] AS [metric_index],
    [m].[metric] AS [metric],
    [m].[kind] AS [kind],
    [m].[role] AS [role],
    [m].[method] AS [method],
    [m].[sigma] AS [sigma],
    [m].[direction] AS [direction],
    [m].[margin] AS [margin],
    [m].[relative_margin] AS [relative_margin],
    [m].[target] AS [target],
    [s].[segment_index] AS [segment_index],
    [s].[segment] AS [segment],
    [s].[segment_value] AS [segment_value],
    [s].[arm_label] AS [arm],
    [s].[units] AS [units],
    CASE [m].[metric_index]
      WHEN 0
      THEN [s].[n_0]
      WHEN 1
      THEN [s].[n_1]
      WHEN 2
      THEN [s].[n_2]
    END AS [n],
    CASE [m].[metric_index]
      WHEN 0
      THEN [s].[mean_0] * [s].[n_0]
      WHEN 1
      THEN [s].[mean_1] * [s].[n_1]
      WHEN 2
      THEN [s].[mean_2] * [s].[n_2]
    END AS [total],
    CASE [m].[metric_index]
      WHEN 0
      THEN [s].[mean_0]
      WHEN 1
      THEN [s].[mean_1]
      WHEN 2
      THEN [s].[mean_2]
    END AS [mean],
    CASE [m].[metric_index]
      WHEN 0
      THEN [s].[variance_0]
      WHEN 1
      THEN [s].[variance_1]
      WHEN 2
      THEN [s].[variance_2]
    END AS [variance],
    CASE [m].[metric_index]
      WHEN 0
      THEN CAST(0 AS FLOAT)
      WHEN 1
      THEN [s].[invalid_1]
      WHEN 2
      THEN CAST(0 AS FLOAT)
    END AS [invalid],
    CASE [m].[metric_index] WHEN 2 THEN [s].[n_3] END AS [x_n],
    CASE [m].[metric_index] WHEN 2 THEN [s].[mean_3] * [s].[n_3] END AS [x_total],
    CASE [m].[metric_index] WHEN 2 THEN [s].[mean_3] END AS [x_mean],
    CASE [m].[metric_index] WHEN 2 THEN [s].[variance_3] END AS [x_variance],
    CASE [m].[metric_index] WHEN 2 THEN [s].[covariance_2_3] END AS [xy_covariance]
  FROM [arm_stats] AS [s]
  CROSS JOIN [metric_list] AS [m]
), [with_control] AS (
  SELECT
    [metric_index] AS [metric_index],
    [metric] AS [metric],
    [kind] AS [kind],
    [role] AS [role],
    [method] AS [method],
    [sigma] AS [sigma],
    [direction] AS [direction],
    [margin] AS [margin],
    [relative_margin] AS [relative_margin],
    [target] AS [target],
    [segment_index] AS [segment_index],
    [segment] AS [segment],
    [segment_value] AS [segment_value],
    [arm] AS [arm],
    CASE WHEN [arm] = 'control' THEN 1 ELSE 0 END AS [is_control],
    [units] AS [units],
    SUM(CASE WHEN [arm] IS NULL THEN [units] ELSE 0 END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [excluded_units],
    [n] AS [n],
    [total] AS [total],
    [mean] AS [mean],
    [variance] AS [variance],
    [invalid] AS [invalid],
    [x_n] AS [x_n],
    [x_total] AS [x_total],
    [x_mean] AS [x_mean],
    [x_variance] AS [x_variance],
    [xy_covariance] AS [xy_covariance],
    MAX(CASE WHEN [arm] = 'control' THEN [n] END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [control_n],
    MAX(CASE WHEN [arm] = 'control' THEN [total] END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [control_total],
    MAX(CASE WHEN [arm] = 'control' THEN [mean] END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [control_mean],
    MAX(CASE WHEN [arm] = 'control' THEN [variance] END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [control_variance],
    MAX(CASE WHEN [arm] = 'control' THEN [x_n] END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [control_x_n],
    MAX(CASE WHEN [arm] = 'control' THEN [x_total] END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [control_x_total],
    MAX(CASE WHEN [arm] = 'control' THEN [x_mean] END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [control_x_mean],
    MAX(CASE WHEN [arm] = 'control' THEN [x_variance] END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [control_x_variance],
    MAX(CASE WHEN [arm] = 'control' THEN [xy_covariance] END) OVER (PARTITION BY [metric_index], [segment_index], [segment_value]) AS [control_xy_covariance]
  FROM [per_arm]
), [arm_values] AS (
  SELECT
    *,
    CAST(1.0 AS FLOAT) / NULLIF([n], 0) AS [inv_n],
    CAST(1.0 AS FLOAT) / NULLIF([control_n], 0) AS [inv_control_n],
    CASE
      WHEN [kind] = 'ratio'
      THEN CAST([total] AS FLOAT) / NULLIF([x_total], 0)
      ELSE [mean]
    END AS [value],
    CASE
      WHEN [kind] = 'ratio'
      THEN CAST([control_total] AS FLOAT) / NULLIF([control_x_total], 0)
      ELSE [control_mean]
    END AS [control_value],
    CASE
      WHEN [kind] = 'ratio'
      THEN CAST((
        [n] - 1
      ) * (
        [variance] - 2 * (
          CAST([total] AS FLOAT) / NULLIF([x_total], 0)
        ) * [xy_covariance] + (
          CAST([total] AS FLOAT) / NULLIF([x_total], 0)
        ) * (
          CAST([total] AS FLOAT) / NULLIF([x_total], 0)
        ) * [x_variance]
      ) AS FLOAT) / NULLIF([x_total] * [x_total], 0)
      ELSE CAST([variance] AS FLOAT) / NULLIF([n], 0)
    END AS [value_variance],
    CASE
      WHEN [kind] = 'ratio'
      THEN CAST((
        [control_n] - 1
      ) * (
        [control_variance] - 2 * (
          CAST([control_total] AS FLOAT) / NULLIF([control_x_total], 0)
        ) * [control_xy_covariance] + (
          CAST([control_total] AS FLOAT) / NULLIF([control_x_total], 0)
        ) * (
          CAST([control_total] AS FLOAT) / NULLIF([control_x_total], 0)
        ) * [control_x_variance]
      ) AS FLOAT) / NULLIF([control_x_total] * [control_x_total], 0)
      ELSE CAST([control_variance] AS FLOAT) / NULLIF([control_n], 0)
    END AS [control_value_variance],
    CAST((
      [total] + [control_total]
    ) AS FLOAT) / NULLIF([n] + [control_n], 0) AS [pooled_mean],
    CAST((
      (
        [n] - 1
      ) * [variance] + (
        [control_n] - 1
      ) * [control_variance]
    ) AS FLOAT) / NULLIF([n] + [control_n] - 2, 0) AS [pooled_variance],
    CASE
      WHEN [method] = 'cuped_welch_t'
      THEN CAST((
        (
          [n] - 1
        ) * [xy_covariance] + (
          [control_n] - 1
        ) * [control_xy_covariance]
      ) AS FLOAT) / NULLIF((
        [n] - 1
      ) * [x_variance] + (
        [control_n] - 1
      ) * [control_x_variance], 0)
    END AS [theta],
    CASE
      WHEN [method] = 'cuped_welch_t'
      THEN COALESCE(CAST([xy_covariance] AS FLOAT) / NULLIF([x_variance], 0), 0)
    END AS [arm_theta],
    CASE
      WHEN [method] = 'cuped_welch_t'
      THEN COALESCE(CAST([control_xy_covariance] AS FLOAT) / NULLIF([control_x_variance], 0), 0)
    END AS [control_arm_theta],
    CASE
      WHEN [method] = 'cuped_welch_t'
      THEN CAST((
        [n] * [x_mean] + [control_n] * [control_x_mean]
      ) AS FLOAT) / NULLIF([n] + [control_n], 0)
    END AS [pooled_x_mean]
  FROM [with_control]
  WHERE
    NOT [arm] IS NULL
), [adjusted] AS (
  SELECT
    *,
    CASE
      WHEN [method] = 'cuped_welch_t'
      THEN CAST((
        [n] - 1
      ) * (
        [variance] - [arm_theta] * [xy_covariance]
      ) AS FLOAT) / NULLIF([n] - 2, 0) * (
        [inv_n] + CASE
          WHEN [x_variance] > 0
          THEN CAST((
            [x_mean] - [pooled_x_mean]
          ) * (
            [x_mean] - [pooled_x_mean]
          ) AS FLOAT) / (
            (
              [n] - 1
            ) * [x_variance]
          )
          ELSE 0
        END
      )
    END AS [adjusted_variance_of_mean],
    CASE
      WHEN [method] = 'cuped_welch_t'
      THEN CAST((
        [control_n] - 1
      ) * (
        [control_variance] - [control_arm_theta] * [control_xy_covariance]
      ) AS FLOAT) / NULLIF([control_n] - 2, 0) * (
        [inv_control_n] + CASE
          WHEN [control_x_variance] > 0
          THEN CAST((
            [control_x_mean] - [pooled_x_mean]
          ) * (
            [control_x_mean] - [pooled_x_mean]
          ) AS FLOAT) / (
            (
              [control_n] - 1
            ) * [control_x_variance]
          )
          ELSE 0
        END
      )
    END AS [control_adjusted_variance_of_mean]
  FROM [arm_values]
), [compared] AS (
  SELECT
    *,
    CASE WHEN [is_control] = 0 THEN [value] - [control_value] END AS [difference],
    CASE
      WHEN [is_control] = 1
      THEN NULL
      WHEN [method] = 'cuped_welch_t'
      THEN (
        [mean] - [arm_theta] * (
          [x_mean] - [pooled_x_mean]
        )
      ) - (
        [control_mean] - [control_arm_theta] * (
          [control_x_mean] - [pooled_x_mean]
        )
      )
      ELSE [value] - [control_value]
    END AS [estimate],
    CASE
      WHEN [is_control] = 1
      THEN NULL
      WHEN [method] = 'two_proportion_z'
      THEN SQRT(
        CASE
          WHEN [mean] * (
            1 - [mean]
          ) * [inv_n] + [control_mean] * (
            1 - [control_mean]
          ) * [inv_control_n] < 0
          THEN NULL
          ELSE [mean] * (
            1 - [mean]
          ) * [inv_n] + [control_mean] * (
            1 - [control_mean]
          ) * [inv_control_n]
        END
      )
      WHEN [method] = 'z_known_sigma'
      THEN [sigma] * SQRT([inv_n] + [inv_control_n])
      WHEN [method] = 'student_t'
      THEN SQRT(
        CASE
          WHEN [pooled_variance] * (
            [inv_n] + [inv_control_n]
          ) < 0
          THEN NULL
          ELSE [pooled_variance] * (
            [inv_n] + [inv_control_n]
          )
        END
      )
      WHEN [method] = 'cuped_welch_t'
      THEN SQRT(
        CASE
          WHEN [adjusted_variance_of_mean] + [control_adjusted_variance_of_mean] < 0
          THEN NULL
          ELSE [adjusted_variance_of_mean] + [control_adjusted_variance_of_mean]
        END
      )
      ELSE SQRT(
        CASE
          WHEN [value_variance] + [control_value_variance] < 0
          THEN NULL
          ELSE [value_variance] + [control_value_variance]
        END
      )
    END AS [std_error],
    CASE
      WHEN [is_control] = 1
      THEN NULL
      WHEN [method] = 'two_proportion_z'
      THEN SQRT(
        CASE
          WHEN [pooled_mean] * (
            1 - [pooled_mean]
          ) * (
            [inv_n] + [inv_control_n]
          ) < 0
          THEN NULL
          ELSE [pooled_mean] * (
            1 - [pooled_mean]
          ) * (
            [inv_n] + [inv_control_n]
          )
        END
      )
      WHEN [method] = 'z_known_sigma'
      THEN [sigma] * SQRT([inv_n] + [inv_control_n])
      WHEN [method] = 'student_t'
      THEN SQRT(
        CASE
          WHEN [pooled_variance] * (
            [inv_n] + [inv_control_n]
          ) < 0
          THEN NULL
          ELSE [pooled_variance] * (
            [inv_n] + [inv_control_n]
          )
        END
      )
      WHEN [method] = 'cuped_welch_t'
      THEN SQRT(
        CASE
          WHEN [adjusted_variance_of_mean] + [control_adjusted_variance_of_mean] < 0
          THEN NULL
          ELSE [adjusted_variance_of_mean] + [control_adjusted_variance_of_mean]
        END
      )
      ELSE SQRT(
        CASE
          WHEN [value_variance] + [control_value_variance] < 0
          THEN NULL
          ELSE [value_variance] + [control_value_variance]
        END
      )
    END AS [null_std_error],
    CASE
      WHEN [is_control] = 1
      THEN NULL
      WHEN [method] = 'welch_t'
      THEN CAST((
        [value_variance] + [control_value_variance]
      ) * (
        [value_variance] + [control_value_variance]
      ) AS FLOAT) / NULLIF(
        CAST([value_variance] * [value_variance] AS FLOAT) / NULLIF([n] - 1, 0) + CAST([control_value_variance] * [control_value_variance] AS FLOAT) / NULLIF([control_n] - 1, 0),
        0
      )
      WHEN [method] = 'cuped_welch_t'
      THEN CAST((
        [adjusted_variance_of_mean] + [control_adjusted_variance_of_mean]
      ) * (
        [adjusted_variance_of_mean] + [control_adjusted_variance_of_mean]
      ) AS FLOAT) / NULLIF(
        CAST([adjusted_variance_of_mean] * [adjusted_variance_of_mean] AS FLOAT) / NULLIF([n] - 2, 0) + CAST([control_adjusted_variance_of_mean] * [control_adjusted_variance_of_mean] AS FLOAT) / NULLIF([control_n] - 2, 0),
        0
      )
      WHEN [method] = 'student_t'
      THEN NULLIF([n] + [control_n] - 2, 0)
    END AS [df],
    CASE
      WHEN [method] = 'cuped_welch_t' AND [is_control] = 0
      THEN 1 - CAST((
        [adjusted_variance_of_mean] + [control_adjusted_variance_of_mean]
      ) AS FLOAT) / NULLIF(
        CAST([variance] AS FLOAT) / NULLIF([n], 0) + CAST([control_variance] AS FLOAT) / NULLIF([control_n], 0),
        0
      )
    END AS [variance_reduction],
    CASE
      WHEN [target] IS NULL
      THEN NULL
      WHEN [kind] = 'proportion'
      THEN CAST((
        [value] - [target]
      ) AS FLOAT) / NULLIF(SQRT([target] * (
        1 - [target]
      ) * [inv_n]), 0)
      ELSE CAST((
        [value] - [target]
      ) AS FLOAT) / NULLIF(SQRT(CASE WHEN [value_variance] < 0 THEN NULL ELSE [value_variance] END), 0)
    END AS [target_statistic],
    CASE WHEN NOT [target] IS NULL AND [kind] = 'mean' THEN [n] - 1 END AS [target_df]
  FROM [adjusted]
), [lift_terms] AS (
  SELECT
    *,
    CASE
      WHEN [method] = 'two_proportion_z'
      THEN [control_mean] * (
        1 - [control_mean]
      ) * [inv_control_n]
      WHEN [method] = 'z_known_sigma'
      THEN [sigma] * [sigma] * [inv_control_n]
      WHEN [method] = 'student_t'
      THEN [pooled_variance] * [inv_control_n]
      ELSE [control_value_variance]
    END AS [lift_control_variance],
    CASE
      WHEN [method] = 'cuped_welch_t'
      THEN (
        [control_variance] - (
          [control_arm_theta] + CAST((
            [arm_theta] - [control_arm_theta]
          ) * [control_n] AS FLOAT) / NULLIF([n] + [control_n], 0)
        ) * [control_xy_covariance]
      ) * [inv_control_n]
    END AS [cuped_control_covariance]
  FROM [compared]
), [lifted] AS (
  SELECT
    *,
    CAST([estimate] AS FLOAT) / NULLIF([control_value], 0) AS [relative_lift],
    SQRT(
      CASE
        WHEN CAST([std_error] * [std_error] AS FLOAT) / NULLIF([control_value] * [control_value], 0) + CAST([estimate] * [estimate] * [lift_control_variance] AS FLOAT) / NULLIF([control_value] * [control_value] * [control_value] * [control_value], 0) + CAST(2 * [estimate] * CASE
          WHEN [method] = 'cuped_welch_t'
          THEN [cuped_control_covariance]
          ELSE [lift_control_variance]
        END AS FLOAT) / NULLIF([control_value] * [control_value] * [control_value], 0) < 0
        THEN NULL
        ELSE CAST([std_error] * [std_error] AS FLOAT) / NULLIF([control_value] * [control_value], 0) + CAST([estimate] * [estimate] * [lift_control_variance] AS FLOAT) / NULLIF([control_value] * [control_value] * [control_value] * [control_value], 0) + CAST(2 * [estimate] * CASE
          WHEN [method] = 'cuped_welch_t'
          THEN [cuped_control_covariance]
          ELSE [lift_control_variance]
        END AS FLOAT) / NULLIF([control_value] * [control_value] * [control_value], 0)
      END
    ) AS [lift_std_error]
  FROM [lift_terms]
), [sequential] AS (
  SELECT
    *,
    0.05 * 0.05 * [control_value] * [control_value] AS [mixing_variance],
    [std_error] * [std_error] AS [sequential_variance]
  FROM [lifted]
), [monitored] AS (
  SELECT
    *,
    CASE
      WHEN [sequential_variance] > 0 AND [mixing_variance] > 0
      THEN 0.5 * LOG(
        CAST([sequential_variance] AS FLOAT) / (
          [sequential_variance] + [mixing_variance]
        )
      ) + CAST([mixing_variance] * [estimate] * [estimate] AS FLOAT) / (
        2 * [sequential_variance] * (
          [sequential_variance] + [mixing_variance]
        )
      )
    END AS [log_likelihood_ratio],
    CASE
      WHEN [sequential_variance] > 0 AND [mixing_variance] > 0
      THEN SQRT(
        CAST([sequential_variance] * (
          [sequential_variance] + [mixing_variance]
        ) AS FLOAT) / [mixing_variance] * (
          2 * LOG(CAST(1 AS FLOAT) / 0.05) + LOG(
            CAST((
              [sequential_variance] + [mixing_variance]
            ) AS FLOAT) / [sequential_variance]
          )
        )
      )
    END AS [sequence_half_width]
  FROM [sequential]
), [monitored_p] AS (
  SELECT
    *,
    CASE
      WHEN [log_likelihood_ratio] IS NULL
      THEN NULL
      WHEN [log_likelihood_ratio] <= 0
      THEN 1.0
      WHEN [log_likelihood_ratio] > 700
      THEN 0.0
      ELSE EXP(-[log_likelihood_ratio])
    END AS [sequential_p_value]
  FROM [monitored]
), [result] AS (
  SELECT
    [metric_index] AS [metric_index],
    [metric] AS [metric],
    [kind] AS [kind],
    [role] AS [role],
    [method] AS [method],
    [segment_index] AS [segment_index],
    [segment] AS [segment],
    [segment_value] AS [segment_value],
    [arm] AS [arm],
    [is_control] AS [is_control],
    [units] AS [units],
    [excluded_units] AS [excluded_units],
    [n] AS [n],
    [total] AS [total],
    [mean] AS [mean],
    [variance] AS [variance],
    [invalid] AS [invalid],
    [x_n] AS [x_n],
    [x_total] AS [x_total],
    [x_mean] AS [x_mean],
    [x_variance] AS [x_variance],
    [xy_covariance] AS [xy_covariance],
    [value] AS [value],
    SQRT([value_variance]) AS [value_std_error],
    [control_n] AS [control_n],
    [control_total] AS [control_total],
    [control_mean] AS [control_mean],
    [control_variance] AS [control_variance],
    [control_value] AS [control_value],
    SQRT([control_value_variance]) AS [control_value_std_error],
    [difference] AS [difference],
    [estimate] AS [estimate],
    [std_error] AS [std_error],
    [null_std_error] AS [null_std_error],
    CAST([estimate] AS FLOAT) / NULLIF([null_std_error], 0) AS [statistic],
    [df] AS [df],
    [theta] AS [theta],
    [variance_reduction] AS [variance_reduction],
    [relative_lift] AS [relative_lift],
    [lift_std_error] AS [lift_std_error],
    [direction] AS [direction],
    [margin] AS [margin],
    [relative_margin] AS [relative_margin],
    CASE
      WHEN [is_control] = 1
      THEN NULL
      WHEN NOT [margin] IS NULL AND [direction] = 'higher'
      THEN CAST((
        [estimate] + [margin]
      ) AS FLOAT) / NULLIF([std_error], 0)
      WHEN NOT [margin] IS NULL AND [direction] = 'lower'
      THEN CAST((
        [margin] - [estimate]
      ) AS FLOAT) / NULLIF([std_error], 0)
      WHEN NOT [relative_margin] IS NULL AND [direction] = 'higher'
      THEN CAST((
        [relative_lift] + [relative_margin]
      ) AS FLOAT) / NULLIF([lift_std_error], 0)
      WHEN NOT [relative_margin] IS NULL AND [direction] = 'lower'
      THEN CAST((
        [relative_margin] - [relative_lift]
      ) AS FLOAT) / NULLIF([lift_std_error], 0)
    END AS [margin_statistic],
    [target] AS [target],
    [target_statistic] AS [target_statistic],
    [target_df] AS [target_df],
    [arm_theta] AS [theta_treatment],
    [control_arm_theta] AS [theta_control],
    [sequential_p_value] AS [always_valid_p_value],
    [estimate] - [sequence_half_width] AS [sequence_low],
    [estimate] + [sequence_half_width] AS [sequence_high]
  FROM [monitored_p]
)
SELECT
  [metric_index],
  [metric],
  [kind],
  [role],
  [method],
  [segment_index],
  [segment],
  [segment_value],
  [arm],
  [is_control],
  [units],
  [excluded_units],
  [n],
  [total],
  [mean],
  [variance],
  [invalid],
  [x_n],
  [x_total],
  [x_mean],
  [x_variance],
  [xy_covariance],
  [value],
  [value_std_error],
  [control_n],
  [control_total],
  [control_mean],
  [control_variance],
  [control_value],
  [control_value_std_error],
  [difference],
  [estimate],
  [std_error],
  [null_std_error],
  [statistic],
  [df],
  [theta],
  [variance_reduction],
  [relative_lift],
  [lift_std_error],
  [direction],
  [margin],
  [relative_margin],
  [margin_statistic],
  [target],
  [target_statistic],
  [target_df],
  [theta_treatment],
  [theta_control],
  [always_valid_p_value],
  [sequence_low],
  [sequence_high]
FROM [result]
ORDER BY
  CASE WHEN [metric_index] IS NULL THEN 1 ELSE 0 END, [metric_index],
  CASE WHEN [segment_index] IS NULL THEN 1 ELSE 0 END, [segment_index],
  CASE WHEN [segment_value] IS NULL THEN 1 ELSE 0 END, [segment_value],
  [is_control] DESC,
  CASE WHEN [arm] IS NULL THEN 1 ELSE 0 END, [arm]
