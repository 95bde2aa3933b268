WITH "ASSIGNED_UNITS" AS (
  SELECT
    "VISITOR_ID" AS "UNIT_ID",
    MIN(CAST("ARM" AS VARCHAR)) AS "ARM_LABEL",
    COUNT(DISTINCT CAST("ARM" AS VARCHAR)) AS "ARM_COUNT"
  FROM "SHOP"."ASSIGNMENTS" AS "ASSIGNMENT_ROWS"
  WHERE
    "ASSIGNED_ON" >= CAST('2026-03-01' AS DATE)
  GROUP BY
    "VISITOR_ID"
), "UNIT_EVENTS" AS (
  SELECT
    "VISITOR_ID" AS "UNIT_ID",
    CASE
      WHEN SUM(CAST(CASE WHEN "TOTAL" > 0 THEN 1 ELSE 0 END AS DOUBLE)) > 0
      THEN 1
      ELSE 0
    END AS "RAW_0",
    SUM(CAST("TOTAL" AS DOUBLE)) AS "RAW_1",
    SUM(CAST("TOTAL" AS DOUBLE)) AS "RAW_2",
    SUM(CAST("TOTAL" AS DOUBLE)) AS "RAW_3",
    SUM(CAST("ITEMS" AS DOUBLE)) / NULLIF(COUNT(*), 0) AS "RAW_4",
    AVG(CAST("ITEMS" AS DOUBLE)) AS "RAW_5"
  FROM "SHOP"."ORDERS" AS "EVENT_ROWS"
  WHERE
    "STATUS" <> 'cancelled'
  GROUP BY
    "VISITOR_ID"
), "UNIT_LEVEL" AS (
  SELECT
    "A"."UNIT_ID",
    "A"."ARM_LABEL",
    "A"."ARM_COUNT",
    "E"."RAW_0",
    "E"."RAW_1",
    "E"."RAW_2",
    "E"."RAW_3",
    "E"."RAW_4",
    "E"."RAW_5"
  FROM "ASSIGNED_UNITS" AS "A"
  LEFT JOIN "UNIT_EVENTS" AS "E"
    ON "A"."UNIT_ID" = "E"."UNIT_ID"
), "UNIT_VALUES" AS (
  SELECT
    CASE WHEN "ARM_COUNT" = 1 THEN "ARM_LABEL" END AS "ARM_LABEL",
    COALESCE(CAST("RAW_0" AS DOUBLE), 0.0) AS "V_0",
    COALESCE(CAST("RAW_1" AS DOUBLE), 0.0) AS "V_1",
    COALESCE(CAST("RAW_2" AS DOUBLE), 0.0) AS "V_2",
    COALESCE(CAST("RAW_3" AS DOUBLE), 0.0) AS "V_3",
    CAST("RAW_4" AS DOUBLE) AS "V_4",
    CAST("RAW_5" AS DOUBLE) AS "V_5"
  FROM "UNIT_LEVEL"
), "UNIT_CENTRED" AS (
  SELECT
    "ARM_LABEL",
    "V_0",
    "V_0" - AVG("V_0") OVER (PARTITION BY "ARM_LABEL") AS "D_0",
    "V_1",
    "V_1" - AVG("V_1") OVER (PARTITION BY "ARM_LABEL") AS "D_1",
    "V_2",
    "V_2" - AVG("V_2") OVER (PARTITION BY "ARM_LABEL") AS "D_2",
    "V_3",
    "V_3" - AVG("V_3") OVER (PARTITION BY "ARM_LABEL") AS "D_3",
    "V_4",
    "V_4" - AVG("V_4") OVER (PARTITION BY "ARM_LABEL") AS "D_4",
    "V_5",
    "V_5" - AVG("V_5") OVER (PARTITION BY "ARM_LABEL") AS "D_5"
  FROM "UNIT_VALUES"
), "ARM_STATS" AS (
  SELECT
    "ARM_LABEL",
    CAST(COUNT(*) AS DOUBLE) AS "UNITS",
    CAST(COUNT("V_0") AS DOUBLE) AS "N_0",
    SUM("V_0") AS "TOTAL_0",
    AVG("V_0") AS "MEAN_0",
    (
      SUM("D_0" * "D_0") - SUM("D_0") * SUM("D_0") / NULLIF(CAST(COUNT("D_0") AS DOUBLE), 0)
    ) / NULLIF(CAST(COUNT("D_0") AS DOUBLE) - 1, 0) AS "VARIANCE_0",
    CAST(SUM(CASE WHEN "V_0" IS NULL OR "V_0" = 0 OR "V_0" = 1 THEN 0 ELSE 1 END) AS DOUBLE) AS "INVALID_0",
    CAST(COUNT("V_1") AS DOUBLE) AS "N_1",
    SUM("V_1") AS "TOTAL_1",
    AVG("V_1") AS "MEAN_1",
    (
      SUM("D_1" * "D_1") - SUM("D_1") * SUM("D_1") / NULLIF(CAST(COUNT("D_1") AS DOUBLE), 0)
    ) / NULLIF(CAST(COUNT("D_1") AS DOUBLE) - 1, 0) AS "VARIANCE_1",
    CAST(0 AS DOUBLE) AS "INVALID_1",
    CAST(COUNT("V_2") AS DOUBLE) AS "N_2",
    SUM("V_2") AS "TOTAL_2",
    AVG("V_2") AS "MEAN_2",
    (
      SUM("D_2" * "D_2") - SUM("D_2") * SUM("D_2") / NULLIF(CAST(COUNT("D_2") AS DOUBLE), 0)
    ) / NULLIF(CAST(COUNT("D_2") AS DOUBLE) - 1, 0) AS "VARIANCE_2",
    CAST(0 AS DOUBLE) AS "INVALID_2",
    CAST(COUNT("V_3") AS DOUBLE) AS "N_3",
    SUM("V_3") AS "TOTAL_3",
    AVG("V_3") AS "MEAN_3",
    (
      SUM("D_3" * "D_3") - SUM("D_3") * SUM("D_3") / NULLIF(CAST(COUNT("D_3") AS DOUBLE), 0)
    ) / NULLIF(CAST(COUNT("D_3") AS DOUBLE) - 1, 0) AS "VARIANCE_3",
    CAST(0 AS DOUBLE) AS "INVALID_3",
    CAST(COUNT("V_4") AS DOUBLE) AS "N_4",
    SUM("V_4") AS "TOTAL_4",
    AVG("V_4") AS "MEAN_4",
    (
      SUM("D_4" * "D_4") - SUM("D_4") * SUM("D_4") / NULLIF(CAST(COUNT("D_4") AS DOUBLE), 0)
    ) / NULLIF(CAST(COUNT("D_4") AS DOUBLE) - 1, 0) AS "VARIANCE_4",
    CAST(0 AS DOUBLE) AS "INVALID_4",
    CAST(COUNT("V_5") AS DOUBLE) AS "N_5",
    SUM("V_5") AS "TOTAL_5",
    AVG("V_5") AS "MEAN_5",
    (
      SUM("D_5" * "D_5") - SUM("D_5") * SUM("D_5") / NULLIF(CAST(COUNT("D_5") AS DOUBLE), 0)
    ) / NULLIF(CAST(COUNT("D_5") AS DOUBLE) - 1, 0) AS "VARIANCE_5",
    CAST(0 AS DOUBLE) AS "INVALID_5"
  FROM "UNIT_CENTRED"
  GROUP BY
    "ARM_LABEL"
), "METRIC_LIST" AS (
  SELECT
    0 AS "METRIC_INDEX",
    'ordered' AS "METRIC",
    'proportion' AS "KIND",
    'two_proportion_z' AS "METHOD",
    CAST(NULL AS DOUBLE) AS "SIGMA"
  UNION ALL
  SELECT
    1 AS "METRIC_INDEX",
    'revenue' AS "METRIC",
    'mean' AS "KIND",
    'welch_t' AS "METHOD",
    CAST(NULL AS DOUBLE) AS "SIGMA"
  UNION ALL
  SELECT
    2 AS "METRIC_INDEX",
    'revenue_pooled' AS "METRIC",
    'mean' AS "KIND",
    'student_t' AS "METHOD",
    CAST(NULL AS DOUBLE) AS "SIGMA"
  UNION ALL
  SELECT
    3 AS "METRIC_INDEX",
    'revenue_known_sigma' AS "METRIC",
    'mean' AS "KIND",
    'z_known_sigma' AS "METHOD",
    CAST(42.5 AS DOUBLE) AS "SIGMA"
  UNION ALL
  SELECT
    4 AS "METRIC_INDEX",
    'items_per_order' AS "METRIC",
    'mean' AS "KIND",
    'welch_t' AS "METHOD",
    CAST(NULL AS DOUBLE) AS "SIGMA"
  UNION ALL
  SELECT
    5 AS "METRIC_INDEX",
    'average_items' AS "METRIC",
    'mean' AS "KIND",
    'welch_t' AS "METHOD",
    CAST(NULL AS DOUBLE) AS "SIGMA"
), "PER_ARM" AS (
  SELECT
    "M"."METRIC_INDEX",
    "M"."METRIC",
    "M"."KIND",
    "M"."METHOD",
    "M"."SIGMA",
    "S"."ARM_LABEL" AS "ARM",
    "S"."UNITS",
    CASE "M"."METRIC_INDEX"
      WHEN 0
      THEN "S"."N_0"
      WHEN 1
      THEN "S"."N_1"
      WHEN 2
      THEN "S"."N_2"
      WHEN 3
      THEN "S"."N_3"
      WHEN 4
      THEN "S"."N_4"
      WHEN 5
      THEN "S"."N_5"
    END AS "N",
    CASE "M"."METRIC_INDEX"
      WHEN 0
      THEN "S"."TOTAL_0"
      WHEN 1
      THEN "S"."TOTAL_1"
      WHEN 2
      THEN "S"."TOTAL_2"
      WHEN 3
      THEN "S"."TOTAL_3"
      WHEN 4
      THEN "S"."TOTAL_4"
      WHEN 5
      THEN "S"."TOTAL_5"
    END AS "TOTAL",
    CASE "M"."METRIC_INDEX"
      WHEN 0
      THEN "S"."MEAN_0"
      WHEN 1
      THEN "S"."MEAN_1"
      WHEN 2
      THEN "S"."MEAN_2"
      WHEN 3
      THEN "S"."MEAN_3"
      WHEN 4
      THEN "S"."MEAN_4"
      WHEN 5
      THEN "S"."MEAN_5"
    END AS "MEAN",
    CASE "M"."METRIC_INDEX"
      WHEN 0
      THEN "S"."VARIANCE_0"
      WHEN 1
      THEN "S"."VARIANCE_1"
      WHEN 2
      THEN "S"."VARIANCE_2"
      WHEN 3
      THEN "S"."VARIANCE_3"
      WHEN 4
      THEN "S"."VARIANCE_4"
      WHEN 5
      THEN "S"."VARIANCE_5"
    END AS "VARIANCE",
    CASE "M"."METRIC_INDEX"
      WHEN 0
      THEN "S"."INVALID_0"
      WHEN 1
      THEN "S"."INVALID_1"
      WHEN 2
      THEN "S"."INVALID_2"
      WHEN 3
      THEN "S"."INVALID_3"
      WHEN 4
      THEN "S"."INVALID_4"
      WHEN 5
      THEN "S"."INVALID_5"
    END AS "INVALID"
  FROM "ARM_STATS" AS "S"
  CROSS JOIN "METRIC_LIST" AS "M"
), "WITH_CONTROL" AS (
  SELECT
    "METRIC_INDEX",
    "METRIC",
    "KIND",
    "METHOD",
    "SIGMA",
    "ARM",
    CASE WHEN "ARM" = 'control' THEN 1 ELSE 0 END AS "IS_CONTROL",
    "UNITS",
    SUM(CASE WHEN "ARM" IS NULL THEN "UNITS" ELSE 0 END) OVER (PARTITION BY "METRIC_INDEX") AS "EXCLUDED_UNITS",
    "N",
    "TOTAL",
    "MEAN",
    "VARIANCE",
    "INVALID",
    MAX(CASE WHEN "ARM" = 'control' THEN "N" END) OVER (PARTITION BY "METRIC_INDEX") AS "CONTROL_N",
    MAX(CASE WHEN "ARM" = 'control' THEN "TOTAL" END) OVER (PARTITION BY "METRIC_INDEX") AS "CONTROL_TOTAL",
    MAX(CASE WHEN "ARM" = 'control' THEN "MEAN" END) OVER (PARTITION BY "METRIC_INDEX") AS "CONTROL_MEAN",
    MAX(CASE WHEN "ARM" = 'control' THEN "VARIANCE" END) OVER (PARTITION BY "METRIC_INDEX") AS "CONTROL_VARIANCE"
  FROM "PER_ARM"
), "PARTS" AS (
  SELECT
    *,
    1.0 / NULLIF("N", 0) AS "INV_N",
    1.0 / NULLIF("CONTROL_N", 0) AS "INV_CONTROL_N",
    "VARIANCE" / NULLIF("N", 0) AS "VAR_OF_MEAN",
    "CONTROL_VARIANCE" / NULLIF("CONTROL_N", 0) AS "CONTROL_VAR_OF_MEAN",
    (
      "TOTAL" + "CONTROL_TOTAL"
    ) / NULLIF("N" + "CONTROL_N", 0) AS "POOLED_MEAN",
    (
      (
        "N" - 1
      ) * "VARIANCE" + (
        "CONTROL_N" - 1
      ) * "CONTROL_VARIANCE"
    ) / NULLIF("N" + "CONTROL_N" - 2, 0) AS "POOLED_VARIANCE"
  FROM "WITH_CONTROL"
  WHERE
    NOT "ARM" IS NULL
), "COMPARED" AS (
  SELECT
    *,
    CASE WHEN "IS_CONTROL" = 0 THEN "MEAN" - "CONTROL_MEAN" END AS "DIFFERENCE",
    CASE
      WHEN "IS_CONTROL" = 1
      THEN NULL
      WHEN "METHOD" = 'two_proportion_z'
      THEN SQRT(
        CASE
          WHEN "MEAN" * (
            1 - "MEAN"
          ) * "INV_N" + "CONTROL_MEAN" * (
            1 - "CONTROL_MEAN"
          ) * "INV_CONTROL_N" < 0
          THEN NULL
          ELSE "MEAN" * (
            1 - "MEAN"
          ) * "INV_N" + "CONTROL_MEAN" * (
            1 - "CONTROL_MEAN"
          ) * "INV_CONTROL_N"
        END
      )
      WHEN "METHOD" = 'z_known_sigma'
      THEN "SIGMA" * SQRT("INV_N" + "INV_CONTROL_N")
      WHEN "METHOD" = 'student_t'
      THEN SQRT(
        CASE
          WHEN "POOLED_VARIANCE" * (
            "INV_N" + "INV_CONTROL_N"
          ) < 0
          THEN NULL
          ELSE "POOLED_VARIANCE" * (
            "INV_N" + "INV_CONTROL_N"
          )
        END
      )
      ELSE SQRT("VAR_OF_MEAN" + "CONTROL_VAR_OF_MEAN")
    END AS "STD_ERROR",
    CASE
      WHEN "IS_CONTROL" = 1
      THEN NULL
      WHEN "METHOD" = 'two_proportion_z'
      THEN SQRT(
        CASE
          WHEN "POOLED_MEAN" * (
            1 - "POOLED_MEAN"
          ) * (
            "INV_N" + "INV_CONTROL_N"
          ) < 0
          THEN NULL
          ELSE "POOLED_MEAN" * (
            1 - "POOLED_MEAN"
          ) * (
            "INV_N" + "INV_CONTROL_N"
          )
        END
      )
      WHEN "METHOD" = 'z_known_sigma'
      THEN "SIGMA" * SQRT("INV_N" + "INV_CONTROL_N")
      WHEN "METHOD" = 'student_t'
      THEN SQRT(
        CASE
          WHEN "POOLED_VARIANCE" * (
            "INV_N" + "INV_CONTROL_N"
          ) < 0
          THEN NULL
          ELSE "POOLED_VARIANCE" * (
            "INV_N" + "INV_CONTROL_N"
          )
        END
      )
      ELSE SQRT("VAR_OF_MEAN" + "CONTROL_VAR_OF_MEAN")
    END AS "NULL_STD_ERROR",
    CASE
      WHEN "IS_CONTROL" = 1
      THEN NULL
      WHEN "METHOD" = 'welch_t'
      THEN (
        "VAR_OF_MEAN" + "CONTROL_VAR_OF_MEAN"
      ) * (
        "VAR_OF_MEAN" + "CONTROL_VAR_OF_MEAN"
      ) / NULLIF(
        "VAR_OF_MEAN" * "VAR_OF_MEAN" / NULLIF("N" - 1, 0) + "CONTROL_VAR_OF_MEAN" * "CONTROL_VAR_OF_MEAN" / NULLIF("CONTROL_N" - 1, 0),
        0
      )
      WHEN "METHOD" = 'student_t'
      THEN NULLIF("N" + "CONTROL_N" - 2, 0)
    END AS "DF"
  FROM "PARTS"
)
SELECT
  "METRIC_INDEX",
  "METRIC",
  "KIND",
  "METHOD",
  "ARM",
  "IS_CONTROL",
  "UNITS",
  "EXCLUDED_UNITS",
  "N",
  "TOTAL",
  "MEAN",
  "VARIANCE",
  "INVALID",
  "CONTROL_N",
  "CONTROL_TOTAL",
  "CONTROL_MEAN",
  "CONTROL_VARIANCE",
  "DIFFERENCE",
  "STD_ERROR",
  "NULL_STD_ERROR",
  "DIFFERENCE" / NULLIF("NULL_STD_ERROR", 0) AS "STATISTIC",
  "DF"
FROM "COMPARED"
ORDER BY
  "METRIC_INDEX",
  "IS_CONTROL" DESC NULLS LAST,
  "ARM"
