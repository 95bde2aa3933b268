WITH "UNIT_LEVEL" AS (
  SELECT
    "SELECT" AS "UNIT_ID",
    CAST("ORDER" AS VARCHAR) AS "ARM_LABEL",
    1 AS "ARM_COUNT",
    "BasketValue" AS "RAW_0",
    CASE WHEN "RETURNED" = TRUE THEN 1 ELSE 0 END AS "RAW_1"
  FROM "SHOP"."VISITOR_SUMMARY" AS "ASSIGNMENT_ROWS"
), "UNIT_VALUES" AS (
  SELECT
    CASE WHEN "ARM_COUNT" = 1 THEN "ARM_LABEL" END AS "ARM_LABEL",
    COALESCE(CAST("RAW_0" AS DOUBLE), 0.0) AS "V_0",
    COALESCE(CAST("RAW_1" AS DOUBLE), 0.0) AS "V_1"
  FROM "UNIT_LEVEL"
), "UNIT_CENTRED" AS (
  SELECT
    "ARM_LABEL",
    "V_0",
    "V_0" - AVG("V_0") OVER (PARTITION BY "ARM_LABEL") AS "D_0",
    "V_1",
    "V_1" - AVG("V_1") OVER (PARTITION BY "ARM_LABEL") AS "D_1"
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
    CAST(0 AS DOUBLE) AS "INVALID_0",
    CAST(COUNT("V_1") AS DOUBLE) AS "N_1",
    SUM("V_1") AS "TOTAL_1",
    AVG("V_1") AS "MEAN_1",
    (
      SUM("D_1" * "D_1") - SUM("D_1") * SUM("D_1") / NULLIF(CAST(COUNT("D_1") AS DOUBLE), 0)
    ) / NULLIF(CAST(COUNT("D_1") AS DOUBLE) - 1, 0) AS "VARIANCE_1",
    CAST(SUM(CASE WHEN "V_1" IS NULL OR "V_1" = 0 OR "V_1" = 1 THEN 0 ELSE 1 END) AS DOUBLE) AS "INVALID_1"
  FROM "UNIT_CENTRED"
  GROUP BY
    "ARM_LABEL"
), "METRIC_LIST" AS (
  SELECT
    0 AS "METRIC_INDEX",
    'basket' AS "METRIC",
    'mean' AS "KIND",
    'welch_t' AS "METHOD",
    CAST(NULL AS DOUBLE) AS "SIGMA"
  UNION ALL
  SELECT
    1 AS "METRIC_INDEX",
    'returned' AS "METRIC",
    'proportion' AS "KIND",
    'two_proportion_z' AS "METHOD",
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
    CASE "M"."METRIC_INDEX" WHEN 0 THEN "S"."N_0" WHEN 1 THEN "S"."N_1" END AS "N",
    CASE "M"."METRIC_INDEX" WHEN 0 THEN "S"."TOTAL_0" WHEN 1 THEN "S"."TOTAL_1" END AS "TOTAL",
    CASE "M"."METRIC_INDEX" WHEN 0 THEN "S"."MEAN_0" WHEN 1 THEN "S"."MEAN_1" END AS "MEAN",
    CASE "M"."METRIC_INDEX" WHEN 0 THEN "S"."VARIANCE_0" WHEN 1 THEN "S"."VARIANCE_1" END AS "VARIANCE",
    CASE "M"."METRIC_INDEX" WHEN 0 THEN "S"."INVALID_0" WHEN 1 THEN "S"."INVALID_1" END AS "INVALID"
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
