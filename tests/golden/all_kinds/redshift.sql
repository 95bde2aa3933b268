WITH "assigned_units" AS (
  SELECT
    "visitor_id" AS "unit_id",
    MIN(CAST("arm" AS VARCHAR(MAX))) AS "arm_label",
    COUNT(DISTINCT CAST("arm" AS VARCHAR(MAX))) AS "arm_count"
  FROM "shop"."assignments" AS "assignment_rows"
  WHERE
    "assigned_on" >= CAST('2026-03-01' AS DATE)
  GROUP BY
    "visitor_id"
), "unit_events" AS (
  SELECT
    "visitor_id" AS "unit_id",
    CASE
      WHEN SUM(CAST(CASE WHEN "total" > 0 THEN 1 ELSE 0 END AS DOUBLE PRECISION)) > 0
      THEN 1
      ELSE 0
    END AS "raw_0",
    SUM(CAST("total" AS DOUBLE PRECISION)) AS "raw_1",
    SUM(CAST("total" AS DOUBLE PRECISION)) AS "raw_2",
    SUM(CAST("total" AS DOUBLE PRECISION)) AS "raw_3",
    CAST(SUM(CAST("items" AS DOUBLE PRECISION)) AS DOUBLE PRECISION) / NULLIF(COUNT(*), 0) AS "raw_4",
    AVG(CAST("items" AS DOUBLE PRECISION)) AS "raw_5"
  FROM "shop"."orders" AS "event_rows"
  WHERE
    "status" <> 'cancelled'
  GROUP BY
    "visitor_id"
), "unit_level" AS (
  SELECT
    "a"."unit_id",
    "a"."arm_label",
    "a"."arm_count",
    "e"."raw_0",
    "e"."raw_1",
    "e"."raw_2",
    "e"."raw_3",
    "e"."raw_4",
    "e"."raw_5"
  FROM "assigned_units" AS "a"
  LEFT JOIN "unit_events" AS "e"
    ON "a"."unit_id" = "e"."unit_id"
), "unit_values" AS (
  SELECT
    CASE WHEN "arm_count" = 1 THEN "arm_label" END AS "arm_label",
    COALESCE(CAST("raw_0" AS DOUBLE PRECISION), 0.0) AS "v_0",
    COALESCE(CAST("raw_1" AS DOUBLE PRECISION), 0.0) AS "v_1",
    COALESCE(CAST("raw_2" AS DOUBLE PRECISION), 0.0) AS "v_2",
    COALESCE(CAST("raw_3" AS DOUBLE PRECISION), 0.0) AS "v_3",
    CAST("raw_4" AS DOUBLE PRECISION) AS "v_4",
    CAST("raw_5" AS DOUBLE PRECISION) AS "v_5"
  FROM "unit_level"
), "unit_centred" AS (
  SELECT
    "arm_label",
    "v_0",
    "v_0" - AVG("v_0") OVER (PARTITION BY "arm_label") AS "d_0",
    "v_1",
    "v_1" - AVG("v_1") OVER (PARTITION BY "arm_label") AS "d_1",
    "v_2",
    "v_2" - AVG("v_2") OVER (PARTITION BY "arm_label") AS "d_2",
    "v_3",
    "v_3" - AVG("v_3") OVER (PARTITION BY "arm_label") AS "d_3",
    "v_4",
    "v_4" - AVG("v_4") OVER (PARTITION BY "arm_label") AS "d_4",
    "v_5",
    "v_5" - AVG("v_5") OVER (PARTITION BY "arm_label") AS "d_5"
  FROM "unit_values"
), "arm_stats" AS (
  SELECT
    "arm_label",
    CAST(COUNT(*) AS DOUBLE PRECISION) AS "units",
    CAST(COUNT("v_0") AS DOUBLE PRECISION) AS "n_0",
    SUM("v_0") AS "total_0",
    AVG("v_0") AS "mean_0",
    CAST((
      SUM("d_0" * "d_0") - CAST(SUM("d_0") * SUM("d_0") AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_0") AS DOUBLE PRECISION), 0)
    ) AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_0") AS DOUBLE PRECISION) - 1, 0) AS "variance_0",
    CAST(SUM(CASE WHEN "v_0" IS NULL OR "v_0" = 0 OR "v_0" = 1 THEN 0 ELSE 1 END) AS DOUBLE PRECISION) AS "invalid_0",
    CAST(COUNT("v_1") AS DOUBLE PRECISION) AS "n_1",
    SUM("v_1") AS "total_1",
    AVG("v_1") AS "mean_1",
    CAST((
      SUM("d_1" * "d_1") - CAST(SUM("d_1") * SUM("d_1") AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_1") AS DOUBLE PRECISION), 0)
    ) AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_1") AS DOUBLE PRECISION) - 1, 0) AS "variance_1",
    CAST(0 AS DOUBLE PRECISION) AS "invalid_1",
    CAST(COUNT("v_2") AS DOUBLE PRECISION) AS "n_2",
    SUM("v_2") AS "total_2",
    AVG("v_2") AS "mean_2",
    CAST((
      SUM("d_2" * "d_2") - CAST(SUM("d_2") * SUM("d_2") AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_2") AS DOUBLE PRECISION), 0)
    ) AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_2") AS DOUBLE PRECISION) - 1, 0) AS "variance_2",
    CAST(0 AS DOUBLE PRECISION) AS "invalid_2",
    CAST(COUNT("v_3") AS DOUBLE PRECISION) AS "n_3",
    SUM("v_3") AS "total_3",
    AVG("v_3") AS "mean_3",
    CAST((
      SUM("d_3" * "d_3") - CAST(SUM("d_3") * SUM("d_3") AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_3") AS DOUBLE PRECISION), 0)
    ) AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_3") AS DOUBLE PRECISION) - 1, 0) AS "variance_3",
    CAST(0 AS DOUBLE PRECISION) AS "invalid_3",
    CAST(COUNT("v_4") AS DOUBLE PRECISION) AS "n_4",
    SUM("v_4") AS "total_4",
    AVG("v_4") AS "mean_4",
    CAST((
      SUM("d_4" * "d_4") - CAST(SUM("d_4") * SUM("d_4") AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_4") AS DOUBLE PRECISION), 0)
    ) AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_4") AS DOUBLE PRECISION) - 1, 0) AS "variance_4",
    CAST(0 AS DOUBLE PRECISION) AS "invalid_4",
    CAST(COUNT("v_5") AS DOUBLE PRECISION) AS "n_5",
    SUM("v_5") AS "total_5",
    AVG("v_5") AS "mean_5",
    CAST((
      SUM("d_5" * "d_5") - CAST(SUM("d_5") * SUM("d_5") AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_5") AS DOUBLE PRECISION), 0)
    ) AS DOUBLE PRECISION) / NULLIF(CAST(COUNT("d_5") AS DOUBLE PRECISION) - 1, 0) AS "variance_5",
    CAST(0 AS DOUBLE PRECISION) AS "invalid_5"
  FROM "unit_centred"
  GROUP BY
    "arm_label"
), "metric_list" AS (
  SELECT
    0 AS "metric_index",
    'ordered' AS "metric",
    'proportion' AS "kind",
    'two_proportion_z' AS "method",
    CAST(NULL AS DOUBLE PRECISION) AS "sigma"
  UNION ALL
  SELECT
    1 AS "metric_index",
    'revenue' AS "metric",
    'mean' AS "kind",
    'welch_t' AS "method",
    CAST(NULL AS DOUBLE PRECISION) AS "sigma"
  UNION ALL
  SELECT
    2 AS "metric_index",
    'revenue_pooled' AS "metric",
    'mean' AS "kind",
    'student_t' AS "method",
    CAST(NULL AS DOUBLE PRECISION) AS "sigma"
  UNION ALL
  SELECT
    3 AS "metric_index",
    'revenue_known_sigma' AS "metric",
    'mean' AS "kind",
    'z_known_sigma' AS "method",
    CAST(42.5 AS DOUBLE PRECISION) AS "sigma"
  UNION ALL
  SELECT
    4 AS "metric_index",
    'items_per_order' AS "metric",
    'mean' AS "kind",
    'welch_t' AS "method",
    CAST(NULL AS DOUBLE PRECISION) AS "sigma"
  UNION ALL
  SELECT
    5 AS "metric_index",
    'average_items' AS "metric",
    'mean' AS "kind",
    'welch_t' AS "method",
    CAST(NULL AS DOUBLE PRECISION) AS "sigma"
), "per_arm" AS (
  SELECT
    "m"."metric_index",
    "m"."metric",
    "m"."kind",
    "m"."method",
    "m"."sigma",
    "s"."arm_label" AS "arm",
    "s"."units",
    CASE "m"."metric_index"
      WHEN 0
      THEN "s"."n_0"
      WHEN 1
      THEN "s"."n_1"
      WHEN 2
      THEN "s"."n_2"
      WHEN 3
      THEN "s"."n_3"
      WHEN 4
      THEN "s"."n_4"
      WHEN 5
      THEN "s"."n_5"
    END AS "n",
    CASE "m"."metric_index"
      WHEN 0
      THEN "s"."total_0"
      WHEN 1
      THEN "s"."total_1"
      WHEN 2
      THEN "s"."total_2"
      WHEN 3
      THEN "s"."total_3"
      WHEN 4
      THEN "s"."total_4"
      WHEN 5
      THEN "s"."total_5"
    END AS "total",
    CASE "m"."metric_index"
      WHEN 0
      THEN "s"."mean_0"
      WHEN 1
      THEN "s"."mean_1"
      WHEN 2
      THEN "s"."mean_2"
      WHEN 3
      THEN "s"."mean_3"
      WHEN 4
      THEN "s"."mean_4"
      WHEN 5
      THEN "s"."mean_5"
    END AS "mean",
    CASE "m"."metric_index"
      WHEN 0
      THEN "s"."variance_0"
      WHEN 1
      THEN "s"."variance_1"
      WHEN 2
      THEN "s"."variance_2"
      WHEN 3
      THEN "s"."variance_3"
      WHEN 4
      THEN "s"."variance_4"
      WHEN 5
      THEN "s"."variance_5"
    END AS "variance",
    CASE "m"."metric_index"
      WHEN 0
      THEN "s"."invalid_0"
      WHEN 1
      THEN "s"."invalid_1"
      WHEN 2
      THEN "s"."invalid_2"
      WHEN 3
      THEN "s"."invalid_3"
      WHEN 4
      THEN "s"."invalid_4"
      WHEN 5
      THEN "s"."invalid_5"
    END AS "invalid"
  FROM "arm_stats" AS "s"
  CROSS JOIN "metric_list" AS "m"
), "with_control" AS (
  SELECT
    "metric_index",
    "metric",
    "kind",
    "method",
    "sigma",
    "arm",
    CASE WHEN "arm" = 'control' THEN 1 ELSE 0 END AS "is_control",
    "units",
    SUM(CASE WHEN "arm" IS NULL THEN "units" ELSE 0 END) OVER (PARTITION BY "metric_index") AS "excluded_units",
    "n",
    "total",
    "mean",
    "variance",
    "invalid",
    MAX(CASE WHEN "arm" = 'control' THEN "n" END) OVER (PARTITION BY "metric_index") AS "control_n",
    MAX(CASE WHEN "arm" = 'control' THEN "total" END) OVER (PARTITION BY "metric_index") AS "control_total",
    MAX(CASE WHEN "arm" = 'control' THEN "mean" END) OVER (PARTITION BY "metric_index") AS "control_mean",
    MAX(CASE WHEN "arm" = 'control' THEN "variance" END) OVER (PARTITION BY "metric_index") AS "control_variance"
  FROM "per_arm"
), "parts" AS (
  SELECT
    *,
    CAST(1.0 AS DOUBLE PRECISION) / NULLIF("n", 0) AS "inv_n",
    CAST(1.0 AS DOUBLE PRECISION) / NULLIF("control_n", 0) AS "inv_control_n",
    CAST("variance" AS DOUBLE PRECISION) / NULLIF("n", 0) AS "var_of_mean",
    CAST("control_variance" AS DOUBLE PRECISION) / NULLIF("control_n", 0) AS "control_var_of_mean",
    CAST((
      "total" + "control_total"
    ) AS DOUBLE PRECISION) / NULLIF("n" + "control_n", 0) AS "pooled_mean",
    CAST((
      (
        "n" - 1
      ) * "variance" + (
        "control_n" - 1
      ) * "control_variance"
    ) AS DOUBLE PRECISION) / NULLIF("n" + "control_n" - 2, 0) AS "pooled_variance"
  FROM "with_control"
  WHERE
    NOT "arm" IS NULL
), "compared" AS (
  SELECT
    *,
    CASE WHEN "is_control" = 0 THEN "mean" - "control_mean" END AS "difference",
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
      ELSE SQRT("var_of_mean" + "control_var_of_mean")
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
      ELSE SQRT("var_of_mean" + "control_var_of_mean")
    END AS "null_std_error",
    CASE
      WHEN "is_control" = 1
      THEN NULL
      WHEN "method" = 'welch_t'
      THEN CAST((
        "var_of_mean" + "control_var_of_mean"
      ) * (
        "var_of_mean" + "control_var_of_mean"
      ) AS DOUBLE PRECISION) / NULLIF(
        CAST("var_of_mean" * "var_of_mean" AS DOUBLE PRECISION) / NULLIF("n" - 1, 0) + CAST("control_var_of_mean" * "control_var_of_mean" AS DOUBLE PRECISION) / NULLIF("control_n" - 1, 0),
        0
      )
      WHEN "method" = 'student_t'
      THEN NULLIF("n" + "control_n" - 2, 0)
    END AS "df"
  FROM "parts"
)
SELECT
  "metric_index",
  "metric",
  "kind",
  "method",
  "arm",
  "is_control",
  "units",
  "excluded_units",
  "n",
  "total",
  "mean",
  "variance",
  "invalid",
  "control_n",
  "control_total",
  "control_mean",
  "control_variance",
  "difference",
  "std_error",
  "null_std_error",
  CAST("difference" AS DOUBLE PRECISION) / NULLIF("null_std_error", 0) AS "statistic",
  "df"
FROM "compared"
ORDER BY
  "metric_index",
  "is_control" DESC NULLS LAST,
  "arm"
