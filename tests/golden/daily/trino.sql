WITH "assigned_units" AS (
  SELECT
    "member_id" AS "unit_id",
    MIN(CAST("arm" AS VARCHAR)) AS "arm_label",
    MAX(CAST("arm" AS VARCHAR)) AS "arm_label_last"
  FROM "lab"."assignments" AS "assignment_rows"
  GROUP BY
    "member_id"
), "unit_events" AS (
  SELECT
    "member_id" AS "unit_id",
    SUM(CAST("amount" AS DOUBLE)) AS "raw_0",
    CASE WHEN COUNT(*) > 0 THEN 1 ELSE 0 END AS "raw_1",
    SUM(CAST("amount" AS DOUBLE)) AS "raw_2",
    COUNT(*) AS "raw_3"
  FROM "lab"."events" AS "event_rows"
  GROUP BY
    "member_id"
), "unit_joined" AS (
  SELECT
    "a"."unit_id",
    "a"."arm_label",
    "a"."arm_label_last",
    "e"."raw_0",
    "e"."raw_1",
    "e"."raw_2",
    "e"."raw_3"
  FROM "assigned_units" AS "a"
  LEFT JOIN "unit_events" AS "e"
    ON "a"."unit_id" = "e"."unit_id"
), "unit_values" AS (
  SELECT
    CASE WHEN "arm_label" = "arm_label_last" THEN "arm_label" END AS "arm_label",
    COALESCE(CAST("raw_0" AS DOUBLE), 0.0) AS "v_0",
    COALESCE(CAST("raw_1" AS DOUBLE), 0.0) AS "v_1",
    COALESCE(CAST("raw_2" AS DOUBLE), 0.0) AS "v_2",
    COALESCE(CAST("raw_3" AS DOUBLE), 0.0) AS "v_3"
  FROM "unit_joined"
), "arm_stats" AS (
  SELECT
    "arm_label",
    0 AS "segment_index",
    CAST(NULL AS VARCHAR) AS "segment",
    '(all)' AS "segment_value",
    CAST(COUNT(*) AS DOUBLE) AS "units",
    CAST(COUNT("v_0") AS DOUBLE) AS "n_0",
    AVG("v_0") AS "mean_0",
    VARIANCE("v_0") AS "variance_0",
    CAST(COUNT("v_1") AS DOUBLE) AS "n_1",
    AVG("v_1") AS "mean_1",
    VARIANCE("v_1") AS "variance_1",
    CAST(SUM(CASE WHEN "v_1" IS NULL OR "v_1" = 0 OR "v_1" = 1 THEN 0 ELSE 1 END) AS DOUBLE) AS "invalid_1",
    CAST(COUNT("v_2") AS DOUBLE) AS "n_2",
    AVG("v_2") AS "mean_2",
    VARIANCE("v_2") AS "variance_2",
    CAST(COUNT("v_3") AS DOUBLE) AS "n_3",
    AVG("v_3") AS "mean_3",
    VARIANCE("v_3") AS "variance_3",
    COVAR_SAMP("v_2", "v_3") AS "covariance_2_3"
  FROM "unit_values"
  GROUP BY
    "arm_label"
), "metric_list" AS (
  SELECT
    0 AS "metric_index",
    'spend' AS "metric",
    'mean' AS "kind",
    'primary' AS "role",
    'welch_t' AS "method",
    CAST(NULL AS DOUBLE) AS "sigma",
    'higher' AS "direction",
    CAST(NULL AS DOUBLE) AS "margin",
    CAST(NULL AS DOUBLE) AS "relative_margin",
    CAST(NULL AS DOUBLE) AS "target"
  UNION ALL
  SELECT
    1 AS "metric_index",
    'bought' AS "metric",
    'proportion' AS "kind",
    'guardrail' AS "role",
    'two_proportion_z' AS "method",
    CAST(NULL AS DOUBLE) AS "sigma",
    'higher' AS "direction",
    CAST(NULL AS DOUBLE) AS "margin",
    CAST(0.05 AS DOUBLE) AS "relative_margin",
    CAST(NULL AS DOUBLE) AS "target"
  UNION ALL
  SELECT
    2 AS "metric_index",
    'spend_per_event' AS "metric",
    'ratio' AS "kind",
    'secondary' AS "role",
    'ratio_delta_z' AS "method",
    CAST(NULL AS DOUBLE) AS "sigma",
    CAST(NULL AS VARCHAR) AS "direction",
    CAST(NULL AS DOUBLE) AS "margin",
    CAST(NULL AS DOUBLE) AS "relative_margin",
    CAST(NULL AS DOUBLE) AS "target"
), "per_arm" AS (
  SELECT
    "m"."metric_index",
    "m"."metric",
    "m"."kind",
    "m"."role",
    "m"."method",
    "m"."sigma",
    "m"."direction",
    "m"."margin",
    "m"."relative_margin",
    "m"."target",
    "s"."segment_index",
    "s"."segment",
    "s"."segment_value",
    "s"."arm_label" AS "arm",
    "s"."units",
    CASE "m"."metric_index"
      WHEN 0
      THEN "s"."n_0"
      WHEN 1
      THEN "s"."n_1"
      WHEN 2
      THEN "s"."n_2"
    END AS "n",
    CASE "m"."metric_index"
      WHEN 0
      THEN "s"."mean_0" * "s"."n_0"
      WHEN 1
      THEN "s"."mean_1" * "s"."n_1"
      WHEN 2
      THEN "s"."mean_2" * "s"."n_2"
    END AS "total",
    CASE "m"."metric_index"
      WHEN 0
      THEN "s"."mean_0"
      WHEN 1
      THEN "s"."mean_1"
      WHEN 2
      THEN "s"."mean_2"
    END AS "mean",
    CASE "m"."metric_index"
      WHEN 0
      THEN "s"."variance_0"
      WHEN 1
      THEN "s"."variance_1"
      WHEN 2
      THEN "s"."variance_2"
    END AS "variance",
    CASE "m"."metric_index"
      WHEN 0
      THEN CAST(0 AS DOUBLE)
      WHEN 1
      THEN "s"."invalid_1"
      WHEN 2
      THEN CAST(0 AS DOUBLE)
    END AS "invalid",
    CASE "m"."metric_index" WHEN 2 THEN "s"."n_3" END AS "x_n",
    CASE "m"."metric_index" WHEN 2 THEN "s"."mean_3" * "s"."n_3" END AS "x_total",
    CASE "m"."metric_index" WHEN 2 THEN "s"."mean_3" END AS "x_mean",
    CASE "m"."metric_index" WHEN 2 THEN "s"."variance_3" END AS "x_variance",
    CASE "m"."metric_index" WHEN 2 THEN "s"."covariance_2_3" END AS "xy_covariance"
  FROM "arm_stats" AS "s"
  CROSS JOIN "metric_list" AS "m"
), "with_control" AS (
  SELECT
    "metric_index",
    "metric",
    "kind",
    "role",
    "method",
    "sigma",
    "direction",
    "margin",
    "relative_margin",
    "target",
    "segment_index",
    "segment",
    "segment_value",
    "arm",
    CASE WHEN "arm" = 'control' THEN 1 ELSE 0 END AS "is_control",
    "units",
    SUM(CASE WHEN "arm" IS NULL THEN "units" ELSE 0 END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "excluded_units",
    "n",
    "total",
    "mean",
    "variance",
    "invalid",
    "x_n",
    "x_total",
    "x_mean",
    "x_variance",
    "xy_covariance",
    MAX(CASE WHEN "arm" = 'control' THEN "n" END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "control_n",
    MAX(CASE WHEN "arm" = 'control' THEN "total" END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "control_total",
    MAX(CASE WHEN "arm" = 'control' THEN "mean" END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "control_mean",
    MAX(CASE WHEN "arm" = 'control' THEN "variance" END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "control_variance",
    MAX(CASE WHEN "arm" = 'control' THEN "x_n" END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "control_x_n",
    MAX(CASE WHEN "arm" = 'control' THEN "x_total" END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "control_x_total",
    MAX(CASE WHEN "arm" = 'control' THEN "x_mean" END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "control_x_mean",
    MAX(CASE WHEN "arm" = 'control' THEN "x_variance" END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "control_x_variance",
    MAX(CASE WHEN "arm" = 'control' THEN "xy_covariance" END) OVER (PARTITION BY "metric_index", "segment_index", "segment_value") AS "control_xy_covariance"
  FROM "per_arm"
), "arm_values" AS (
  SELECT
    *,
    CAST(1.0 AS DOUBLE) / NULLIF("n", 0) AS "inv_n",
    CAST(1.0 AS DOUBLE) / NULLIF("control_n", 0) AS "inv_control_n",
    CASE
      WHEN "kind" = 'ratio'
      THEN CAST("total" AS DOUBLE) / NULLIF("x_total", 0)
      ELSE "mean"
    END AS "value",
    CASE
      WHEN "kind" = 'ratio'
      THEN CAST("control_total" AS DOUBLE) / NULLIF("control_x_total", 0)
      ELSE "control_mean"
    END AS "control_value",
    CASE
      WHEN "kind" = 'ratio'
      THEN CAST((
        "n" - 1
      ) * (
        "variance" - 2 * (
          CAST("total" AS DOUBLE) / NULLIF("x_total", 0)
        ) * "xy_covariance" + (
          CAST("total" AS DOUBLE) / NULLIF("x_total", 0)
        ) * (
          CAST("total" AS DOUBLE) / NULLIF("x_total", 0)
        ) * "x_variance"
      ) AS DOUBLE) / NULLIF("x_total" * "x_total", 0)
      ELSE CAST("variance" AS DOUBLE) / NULLIF("n", 0)
    END AS "value_variance",
    CASE
      WHEN "kind" = 'ratio'
      THEN CAST((
        "control_n" - 1
      ) * (
        "control_variance" - 2 * (
          CAST("control_total" AS DOUBLE) / NULLIF("control_x_total", 0)
        ) * "control_xy_covariance" + (
          CAST("control_total" AS DOUBLE) / NULLIF("control_x_total", 0)
        ) * (
          CAST("control_total" AS DOUBLE) / NULLIF("control_x_total", 0)
        ) * "control_x_variance"
      ) AS DOUBLE) / NULLIF("control_x_total" * "control_x_total", 0)
      ELSE CAST("control_variance" AS DOUBLE) / NULLIF("control_n", 0)
    END AS "control_value_variance",
    CAST((
      "total" + "control_total"
    ) AS DOUBLE) / NULLIF("n" + "control_n", 0) AS "pooled_mean",
    CAST((
      (
        "n" - 1
      ) * "variance" + (
        "control_n" - 1
      ) * "control_variance"
    ) AS DOUBLE) / NULLIF("n" + "control_n" - 2, 0) AS "pooled_variance",
    CASE
      WHEN "method" = 'cuped_welch_t'
      THEN CAST((
        (
          "n" - 1
        ) * "xy_covariance" + (
          "control_n" - 1
        ) * "control_xy_covariance"
      ) AS DOUBLE) / NULLIF((
        "n" - 1
      ) * "x_variance" + (
        "control_n" - 1
      ) * "control_x_variance", 0)
    END AS "theta",
    CASE
      WHEN "method" = 'cuped_welch_t'
      THEN COALESCE(CAST("xy_covariance" AS DOUBLE) / NULLIF("x_variance", 0), 0)
    END AS "arm_theta",
    CASE
      WHEN "method" = 'cuped_welch_t'
      THEN COALESCE(CAST("control_xy_covariance" AS DOUBLE) / NULLIF("control_x_variance", 0), 0)
    END AS "control_arm_theta",
    CASE
      WHEN "method" = 'cuped_welch_t'
      THEN CAST((
        "n" * "x_mean" + "control_n" * "control_x_mean"
      ) AS DOUBLE) / NULLIF("n" + "control_n", 0)
    END AS "pooled_x_mean"
  FROM "with_control"
  WHERE
    NOT "arm" IS NULL
), "adjusted" AS (
  SELECT
    *,
    CASE
      WHEN "method" = 'cuped_welch_t'
      THEN CAST((
        "n" - 1
      ) * (
        "variance" - "arm_theta" * "xy_covariance"
      ) AS DOUBLE) / NULLIF("n" - 2, 0) * (
        "inv_n" + CASE
          WHEN "x_variance" > 0
          THEN CAST((
            "x_mean" - "pooled_x_mean"
          ) * (
            "x_mean" - "pooled_x_mean"
          ) AS DOUBLE) / (
            (
              "n" - 1
            ) * "x_variance"
          )
          ELSE 0
        END
      )
    END AS "adjusted_variance_of_mean",
    CASE
      WHEN "method" = 'cuped_welch_t'
      THEN CAST((
        "control_n" - 1
      ) * (
        "control_variance" - "control_arm_theta" * "control_xy_covariance"
      ) AS DOUBLE) / NULLIF("control_n" - 2, 0) * (
        "inv_control_n" + CASE
          WHEN "control_x_variance" > 0
          THEN CAST((
            "control_x_mean" - "pooled_x_mean"
          ) * (
            "control_x_mean" - "pooled_x_mean"
          ) AS DOUBLE) / (
            (
              "control_n" - 1
            ) * "control_x_variance"
          )
          ELSE 0
        END
      )
    END AS "control_adjusted_variance_of_mean"
  FROM "arm_values"
), "compared" AS (
  SELECT
    *,
    CASE WHEN "is_control" = 0 THEN "value" - "control_value" END AS "difference",
    CASE
      WHEN "is_control" = 1
      THEN NULL
      WHEN "method" = 'cuped_welch_t'
      THEN (
        "mean" - "arm_theta" * (
          "x_mean" - "pooled_x_mean"
        )
      ) - (
        "control_mean" - "control_arm_theta" * (
          "control_x_mean" - "pooled_x_mean"
        )
      )
      ELSE "value" - "control_value"
    END AS "estimate",
    CASE
      WHEN "is_control" = 1
      THEN NULL
      WHEN "method" = 'two_proportion_z'
      THEN SQRT(
        CASE
          WHEN "mean" * (
            1 - "mean"
          ) * "inv_n" + "control_mean" * (
            1 - "control_mean"
          ) * "inv_control_n" < 0
          THEN NULL
          ELSE "mean" * (
            1 - "mean"
          ) * "inv_n" + "control_mean" * (
            1 - "control_mean"
          ) * "inv_control_n"
        END
      )
      WHEN "method" = 'z_known_sigma'
      THEN "sigma" * SQRT("inv_n" + "inv_control_n")
      WHEN "method" = 'student_t'
      THEN SQRT(
        CASE
          WHEN "pooled_variance" * (
            "inv_n" + "inv_control_n"
          ) < 0
          THEN NULL
          ELSE "pooled_variance" * (
            "inv_n" + "inv_control_n"
          )
        END
      )
      WHEN "method" = 'cuped_welch_t'
      THEN SQRT(
        CASE
          WHEN "adjusted_variance_of_mean" + "control_adjusted_variance_of_mean" < 0
          THEN NULL
          ELSE "adjusted_variance_of_mean" + "control_adjusted_variance_of_mean"
        END
      )
      ELSE SQRT(
        CASE
          WHEN "value_variance" + "control_value_variance" < 0
          THEN NULL
          ELSE "value_variance" + "control_value_variance"
        END
      )
    END AS "std_error",
    CASE
      WHEN "is_control" = 1
      THEN NULL
      WHEN "method" = 'two_proportion_z'
      THEN SQRT(
        CASE
          WHEN "pooled_mean" * (
            1 - "pooled_mean"
          ) * (
            "inv_n" + "inv_control_n"
          ) < 0
          THEN NULL
          ELSE "pooled_mean" * (
            1 - "pooled_mean"
          ) * (
            "inv_n" + "inv_control_n"
          )
        END
      )
      WHEN "method" = 'z_known_sigma'
      THEN "sigma" * SQRT("inv_n" + "inv_control_n")
      WHEN "method" = 'student_t'
      THEN SQRT(
        CASE
          WHEN "pooled_variance" * (
            "inv_n" + "inv_control_n"
          ) < 0
          THEN NULL
          ELSE "pooled_variance" * (
            "inv_n" + "inv_control_n"
          )
        END
      )
      WHEN "method" = 'cuped_welch_t'
      THEN SQRT(
        CASE
          WHEN "adjusted_variance_of_mean" + "control_adjusted_variance_of_mean" < 0
          THEN NULL
          ELSE "adjusted_variance_of_mean" + "control_adjusted_variance_of_mean"
        END
      )
      ELSE SQRT(
        CASE
          WHEN "value_variance" + "control_value_variance" < 0
          THEN NULL
          ELSE "value_variance" + "control_value_variance"
        END
      )
    END AS "null_std_error",
    CASE
      WHEN "is_control" = 1
      THEN NULL
      WHEN "method" = 'welch_t'
      THEN CAST((
        "value_variance" + "control_value_variance"
      ) * (
        "value_variance" + "control_value_variance"
      ) AS DOUBLE) / NULLIF(
        CAST("value_variance" * "value_variance" AS DOUBLE) / NULLIF("n" - 1, 0) + CAST("control_value_variance" * "control_value_variance" AS DOUBLE) / NULLIF("control_n" - 1, 0),
        0
      )
      WHEN "method" = 'cuped_welch_t'
      THEN CAST((
        "adjusted_variance_of_mean" + "control_adjusted_variance_of_mean"
      ) * (
        "adjusted_variance_of_mean" + "control_adjusted_variance_of_mean"
      ) AS DOUBLE) / NULLIF(
        CAST("adjusted_variance_of_mean" * "adjusted_variance_of_mean" AS DOUBLE) / NULLIF("n" - 2, 0) + CAST("control_adjusted_variance_of_mean" * "control_adjusted_variance_of_mean" AS DOUBLE) / NULLIF("control_n" - 2, 0),
        0
      )
      WHEN "method" = 'student_t'
      THEN NULLIF("n" + "control_n" - 2, 0)
    END AS "df",
    CASE
      WHEN "method" = 'cuped_welch_t' AND "is_control" = 0
      THEN 1 - CAST((
        "adjusted_variance_of_mean" + "control_adjusted_variance_of_mean"
      ) AS DOUBLE) / NULLIF(
        CAST("variance" AS DOUBLE) / NULLIF("n", 0) + CAST("control_variance" AS DOUBLE) / NULLIF("control_n", 0),
        0
      )
    END AS "variance_reduction",
    CASE
      WHEN "target" IS NULL
      THEN NULL
      WHEN "kind" = 'proportion'
      THEN CAST((
        "value" - "target"
      ) AS DOUBLE) / NULLIF(SQRT("target" * (
        1 - "target"
      ) * "inv_n"), 0)
      ELSE CAST((
        "value" - "target"
      ) AS DOUBLE) / NULLIF(SQRT(CASE WHEN "value_variance" < 0 THEN NULL ELSE "value_variance" END), 0)
    END AS "target_statistic",
    CASE WHEN NOT "target" IS NULL AND "kind" = 'mean' THEN "n" - 1 END AS "target_df"
  FROM "adjusted"
), "lift_terms" AS (
  SELECT
    *,
    CASE
      WHEN "method" = 'two_proportion_z'
      THEN "control_mean" * (
        1 - "control_mean"
      ) * "inv_control_n"
      WHEN "method" = 'z_known_sigma'
      THEN "sigma" * "sigma" * "inv_control_n"
      WHEN "method" = 'student_t'
      THEN "pooled_variance" * "inv_control_n"
      ELSE "control_value_variance"
    END AS "lift_control_variance",
    CASE
      WHEN "method" = 'cuped_welch_t'
      THEN (
        "control_variance" - (
          "control_arm_theta" + CAST((
            "arm_theta" - "control_arm_theta"
          ) * "control_n" AS DOUBLE) / NULLIF("n" + "control_n", 0)
        ) * "control_xy_covariance"
      ) * "inv_control_n"
    END AS "cuped_control_covariance"
  FROM "compared"
), "lifted" AS (
  SELECT
    *,
    CAST("estimate" AS DOUBLE) / NULLIF("control_value", 0) AS "relative_lift",
    SQRT(
      CASE
        WHEN CAST("std_error" * "std_error" AS DOUBLE) / NULLIF("control_value" * "control_value", 0) + CAST("estimate" * "estimate" * "lift_control_variance" AS DOUBLE) / NULLIF("control_value" * "control_value" * "control_value" * "control_value", 0) + CAST(2 * "estimate" * CASE
          WHEN "method" = 'cuped_welch_t'
          THEN "cuped_control_covariance"
          ELSE "lift_control_variance"
        END AS DOUBLE) / NULLIF("control_value" * "control_value" * "control_value", 0) < 0
        THEN NULL
        ELSE CAST("std_error" * "std_error" AS DOUBLE) / NULLIF("control_value" * "control_value", 0) + CAST("estimate" * "estimate" * "lift_control_variance" AS DOUBLE) / NULLIF("control_value" * "control_value" * "control_value" * "control_value", 0) + CAST(2 * "estimate" * CASE
          WHEN "method" = 'cuped_welch_t'
          THEN "cuped_control_covariance"
          ELSE "lift_control_variance"
        END AS DOUBLE) / NULLIF("control_value" * "control_value" * "control_value", 0)
      END
    ) AS "lift_std_error"
  FROM "lift_terms"
), "sequential" AS (
  SELECT
    *,
    0.05 * 0.05 * "control_value" * "control_value" AS "mixing_variance",
    "std_error" * "std_error" AS "sequential_variance"
  FROM "lifted"
), "monitored" AS (
  SELECT
    *,
    CASE
      WHEN "sequential_variance" > 0 AND "mixing_variance" > 0
      THEN 0.5 * LN(
        CAST("sequential_variance" AS DOUBLE) / (
          "sequential_variance" + "mixing_variance"
        )
      ) + CAST("mixing_variance" * "estimate" * "estimate" AS DOUBLE) / (
        2 * "sequential_variance" * (
          "sequential_variance" + "mixing_variance"
        )
      )
    END AS "log_likelihood_ratio",
    CASE
      WHEN "sequential_variance" > 0 AND "mixing_variance" > 0
      THEN SQRT(
        CAST("sequential_variance" * (
          "sequential_variance" + "mixing_variance"
        ) AS DOUBLE) / "mixing_variance" * (
          2 * LN(CAST(1 AS DOUBLE) / 0.05) + LN(
            CAST((
              "sequential_variance" + "mixing_variance"
            ) AS DOUBLE) / "sequential_variance"
          )
        )
      )
    END AS "sequence_half_width"
  FROM "sequential"
), "monitored_p" AS (
  SELECT
    *,
    CASE
      WHEN "log_likelihood_ratio" IS NULL
      THEN NULL
      WHEN "log_likelihood_ratio" <= 0
      THEN 1.0
      WHEN "log_likelihood_ratio" > 700
      THEN 0.0
      ELSE EXP(-"log_likelihood_ratio")
    END AS "sequential_p_value"
  FROM "monitored"
), "result" AS (
  SELECT
    "metric_index",
    "metric",
    "kind",
    "role",
    "method",
    "segment_index",
    "segment",
    "segment_value",
    "arm",
    "is_control",
    "units",
    "excluded_units",
    "n",
    "total",
    "mean",
    "variance",
    "invalid",
    "x_n",
    "x_total",
    "x_mean",
    "x_variance",
    "xy_covariance",
    "value",
    SQRT("value_variance") AS "value_std_error",
    "control_n",
    "control_total",
    "control_mean",
    "control_variance",
    "control_value",
    SQRT("control_value_variance") AS "control_value_std_error",
    "difference",
    "estimate",
    "std_error",
    "null_std_error",
    CAST("estimate" AS DOUBLE) / NULLIF("null_std_error", 0) AS "statistic",
    "df",
    "theta",
    "variance_reduction",
    "relative_lift",
    "lift_std_error",
    "direction",
    "margin",
    "relative_margin",
    CASE
      WHEN "is_control" = 1
      THEN NULL
      WHEN NOT "margin" IS NULL AND "direction" = 'higher'
      THEN CAST((
        "estimate" + "margin"
      ) AS DOUBLE) / NULLIF("std_error", 0)
      WHEN NOT "margin" IS NULL AND "direction" = 'lower'
      THEN CAST((
        "margin" - "estimate"
      ) AS DOUBLE) / NULLIF("std_error", 0)
      WHEN NOT "relative_margin" IS NULL AND "direction" = 'higher'
      THEN CAST((
        "relative_lift" + "relative_margin"
      ) AS DOUBLE) / NULLIF("lift_std_error", 0)
      WHEN NOT "relative_margin" IS NULL AND "direction" = 'lower'
      THEN CAST((
        "relative_margin" - "relative_lift"
      ) AS DOUBLE) / NULLIF("lift_std_error", 0)
    END AS "margin_statistic",
    "target",
    "target_statistic",
    "target_df",
    "arm_theta" AS "theta_treatment",
    "control_arm_theta" AS "theta_control",
    "sequential_p_value" AS "always_valid_p_value",
    "estimate" - "sequence_half_width" AS "sequence_low",
    "estimate" + "sequence_half_width" AS "sequence_high"
  FROM "monitored_p"
)
SELECT
  "metric_index",
  "metric",
  "kind",
  "role",
  "method",
  "segment_index",
  "segment",
  "segment_value",
  "arm",
  "is_control",
  "units",
  "excluded_units",
  "n",
  "total",
  "mean",
  "variance",
  "invalid",
  "x_n",
  "x_total",
  "x_mean",
  "x_variance",
  "xy_covariance",
  "value",
  "value_std_error",
  "control_n",
  "control_total",
  "control_mean",
  "control_variance",
  "control_value",
  "control_value_std_error",
  "difference",
  "estimate",
  "std_error",
  "null_std_error",
  "statistic",
  "df",
  "theta",
  "variance_reduction",
  "relative_lift",
  "lift_std_error",
  "direction",
  "margin",
  "relative_margin",
  "margin_statistic",
  "target",
  "target_statistic",
  "target_df",
  "theta_treatment",
  "theta_control",
  "always_valid_p_value",
  "sequence_low",
  "sequence_high"
FROM "result"
ORDER BY
  "metric_index",
  "segment_index",
  "segment_value",
  "is_control" DESC,
  "arm"
