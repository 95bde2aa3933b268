WITH "ASSIGNED_UNITS" AS (
  SELECT
    "VISITOR_ID" AS "UNIT_ID",
    MIN(CAST("ARM" AS VARCHAR)) AS "ARM_LABEL",
    MAX(CAST("ARM" AS VARCHAR)) AS "ARM_LABEL_LAST"
  FROM (
    SELECT
      "VISITOR_ID",
      "ARM"
    FROM "SHOP"."ASSIGNMENTS"
    WHERE
      "SITE" = 'main'
  ) AS "ASSIGNMENT_ROWS"
  GROUP BY
    "VISITOR_ID"
), "UNIT_EVENTS" AS (
  SELECT
    "VISITOR_ID" AS "UNIT_ID",
    COALESCE("SPEND", 0) AS "RAW_0"
  FROM "SHOP"."VISITOR_TOTALS" AS "EVENT_ROWS"
), "UNIT_JOINED" AS (
  SELECT
    "A"."UNIT_ID",
    "A"."ARM_LABEL",
    "A"."ARM_LABEL_LAST",
    "E"."RAW_0"
  FROM "ASSIGNED_UNITS" AS "A"
  LEFT JOIN "UNIT_EVENTS" AS "E"
    ON "A"."UNIT_ID" = "E"."UNIT_ID"
), "UNIT_VALUES" AS (
  SELECT
    CASE WHEN "ARM_LABEL" = "ARM_LABEL_LAST" THEN "ARM_LABEL" END AS "ARM_LABEL",
    COALESCE(CAST("RAW_0" AS DOUBLE), 0.0) AS "V_0"
  FROM "UNIT_JOINED"
), "UNIT_CENTRED" AS (
  SELECT
    "ARM_LABEL",
    "V_0",
    "V_0" - AVG("V_0") OVER (PARTITION BY "ARM_LABEL") AS "D_0"
  FROM "UNIT_VALUES"
), "ARM_STATS" AS (
  SELECT
    "ARM_LABEL",
    0 AS "SEGMENT_INDEX",
    CAST(NULL AS VARCHAR) AS "SEGMENT",
    '(all)' AS "SEGMENT_VALUE",
    CAST(COUNT(*) AS DOUBLE) AS "UNITS",
    CAST(COUNT("V_0") AS DOUBLE) AS "N_0",
    AVG("V_0") AS "MEAN_0",
    (
      SUM("D_0" * "D_0") - SUM("D_0") * SUM("D_0") / NULLIF(CAST(COUNT("D_0") AS DOUBLE), 0)
    ) / NULLIF(CAST(COUNT("D_0") AS DOUBLE) - 1, 0) AS "VARIANCE_0"
  FROM "UNIT_CENTRED"
  GROUP BY
    "ARM_LABEL"
), "METRIC_LIST" AS (
  SELECT
    0 AS "METRIC_INDEX",
    'spend' AS "METRIC",
    'mean' AS "KIND",
    'primary' AS "ROLE",
    'welch_t' AS "METHOD",
    CAST(NULL AS DOUBLE) AS "SIGMA",
    CAST(NULL AS VARCHAR) AS "DIRECTION",
    CAST(NULL AS DOUBLE) AS "MARGIN",
    CAST(NULL AS DOUBLE) AS "RELATIVE_MARGIN",
    CAST(NULL AS DOUBLE) AS "TARGET"
), "PER_ARM" AS (
  SELECT
    "M"."METRIC_INDEX",
    "M"."METRIC",
    "M"."KIND",
    "M"."ROLE",
    "M"."METHOD",
    "M"."SIGMA",
    "M"."DIRECTION",
    "M"."MARGIN",
    "M"."RELATIVE_MARGIN",
    "M"."TARGET",
    "S"."SEGMENT_INDEX",
    "S"."SEGMENT",
    "S"."SEGMENT_VALUE",
    "S"."ARM_LABEL" AS "ARM",
    "S"."UNITS",
    CASE "M"."METRIC_INDEX" WHEN 0 THEN "S"."N_0" END AS "N",
    CASE "M"."METRIC_INDEX" WHEN 0 THEN "S"."MEAN_0" * "S"."N_0" END AS "TOTAL",
    CASE "M"."METRIC_INDEX" WHEN 0 THEN "S"."MEAN_0" END AS "MEAN",
    CASE "M"."METRIC_INDEX" WHEN 0 THEN "S"."VARIANCE_0" END AS "VARIANCE",
    CASE "M"."METRIC_INDEX" WHEN 0 THEN CAST(0 AS DOUBLE) END AS "INVALID",
    CAST(NULL AS DOUBLE) AS "X_N",
    CAST(NULL AS DOUBLE) AS "X_TOTAL",
    CAST(NULL AS DOUBLE) AS "X_MEAN",
    CAST(NULL AS DOUBLE) AS "X_VARIANCE",
    CAST(NULL AS DOUBLE) AS "XY_COVARIANCE"
  FROM "ARM_STATS" AS "S"
  CROSS JOIN "METRIC_LIST" AS "M"
), "WITH_CONTROL" AS (
  SELECT
    "METRIC_INDEX",
    "METRIC",
    "KIND",
    "ROLE",
    "METHOD",
    "SIGMA",
    "DIRECTION",
    "MARGIN",
    "RELATIVE_MARGIN",
    "TARGET",
    "SEGMENT_INDEX",
    "SEGMENT",
    "SEGMENT_VALUE",
    "ARM",
    CASE WHEN "ARM" = 'control' THEN 1 ELSE 0 END AS "IS_CONTROL",
    "UNITS",
    SUM(CASE WHEN "ARM" IS NULL THEN "UNITS" ELSE 0 END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "EXCLUDED_UNITS",
    "N",
    "TOTAL",
    "MEAN",
    "VARIANCE",
    "INVALID",
    "X_N",
    "X_TOTAL",
    "X_MEAN",
    "X_VARIANCE",
    "XY_COVARIANCE",
    MAX(CASE WHEN "ARM" = 'control' THEN "N" END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "CONTROL_N",
    MAX(CASE WHEN "ARM" = 'control' THEN "TOTAL" END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "CONTROL_TOTAL",
    MAX(CASE WHEN "ARM" = 'control' THEN "MEAN" END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "CONTROL_MEAN",
    MAX(CASE WHEN "ARM" = 'control' THEN "VARIANCE" END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "CONTROL_VARIANCE",
    MAX(CASE WHEN "ARM" = 'control' THEN "X_N" END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "CONTROL_X_N",
    MAX(CASE WHEN "ARM" = 'control' THEN "X_TOTAL" END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "CONTROL_X_TOTAL",
    MAX(CASE WHEN "ARM" = 'control' THEN "X_MEAN" END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "CONTROL_X_MEAN",
    MAX(CASE WHEN "ARM" = 'control' THEN "X_VARIANCE" END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "CONTROL_X_VARIANCE",
    MAX(CASE WHEN "ARM" = 'control' THEN "XY_COVARIANCE" END) OVER (PARTITION BY "METRIC_INDEX", "SEGMENT_INDEX", "SEGMENT_VALUE") AS "CONTROL_XY_COVARIANCE"
  FROM "PER_ARM"
), "ARM_VALUES" AS (
  SELECT
    *,
    1.0 / NULLIF("N", 0) AS "INV_N",
    1.0 / NULLIF("CONTROL_N", 0) AS "INV_CONTROL_N",
    CASE WHEN "KIND" = 'ratio' THEN "TOTAL" / NULLIF("X_TOTAL", 0) ELSE "MEAN" END AS "VALUE",
    CASE
      WHEN "KIND" = 'ratio'
      THEN "CONTROL_TOTAL" / NULLIF("CONTROL_X_TOTAL", 0)
      ELSE "CONTROL_MEAN"
    END AS "CONTROL_VALUE",
    CASE
      WHEN "KIND" = 'ratio'
      THEN (
        "N" - 1
      ) * (
        "VARIANCE" - 2 * (
          "TOTAL" / NULLIF("X_TOTAL", 0)
        ) * "XY_COVARIANCE" + (
          "TOTAL" / NULLIF("X_TOTAL", 0)
        ) * (
          "TOTAL" / NULLIF("X_TOTAL", 0)
        ) * "X_VARIANCE"
      ) / NULLIF("X_TOTAL" * "X_TOTAL", 0)
      ELSE "VARIANCE" / NULLIF("N", 0)
    END AS "VALUE_VARIANCE",
    CASE
      WHEN "KIND" = 'ratio'
      THEN (
        "CONTROL_N" - 1
      ) * (
        "CONTROL_VARIANCE" - 2 * (
          "CONTROL_TOTAL" / NULLIF("CONTROL_X_TOTAL", 0)
        ) * "CONTROL_XY_COVARIANCE" + (
          "CONTROL_TOTAL" / NULLIF("CONTROL_X_TOTAL", 0)
        ) * (
          "CONTROL_TOTAL" / NULLIF("CONTROL_X_TOTAL", 0)
        ) * "CONTROL_X_VARIANCE"
      ) / NULLIF("CONTROL_X_TOTAL" * "CONTROL_X_TOTAL", 0)
      ELSE "CONTROL_VARIANCE" / NULLIF("CONTROL_N", 0)
    END AS "CONTROL_VALUE_VARIANCE",
    (
      "TOTAL" + "CONTROL_TOTAL"
    ) / NULLIF("N" + "CONTROL_N", 0) AS "POOLED_MEAN",
    (
      (
        "N" - 1
      ) * "VARIANCE" + (
        "CONTROL_N" - 1
      ) * "CONTROL_VARIANCE"
    ) / NULLIF("N" + "CONTROL_N" - 2, 0) AS "POOLED_VARIANCE",
    CASE
      WHEN "METHOD" = 'cuped_welch_t'
      THEN (
        (
          "N" - 1
        ) * "XY_COVARIANCE" + (
          "CONTROL_N" - 1
        ) * "CONTROL_XY_COVARIANCE"
      ) / NULLIF((
        "N" - 1
      ) * "X_VARIANCE" + (
        "CONTROL_N" - 1
      ) * "CONTROL_X_VARIANCE", 0)
    END AS "THETA",
    CASE
      WHEN "METHOD" = 'cuped_welch_t'
      THEN COALESCE("XY_COVARIANCE" / NULLIF("X_VARIANCE", 0), 0)
    END AS "ARM_THETA",
    CASE
      WHEN "METHOD" = 'cuped_welch_t'
      THEN COALESCE("CONTROL_XY_COVARIANCE" / NULLIF("CONTROL_X_VARIANCE", 0), 0)
    END AS "CONTROL_ARM_THETA",
    CASE
      WHEN "METHOD" = 'cuped_welch_t'
      THEN (
        "N" * "X_MEAN" + "CONTROL_N" * "CONTROL_X_MEAN"
      ) / NULLIF("N" + "CONTROL_N", 0)
    END AS "POOLED_X_MEAN"
  FROM "WITH_CONTROL"
  WHERE
    NOT "ARM" IS NULL
), "ADJUSTED" AS (
  SELECT
    *,
    CASE
      WHEN "METHOD" = 'cuped_welch_t'
      THEN (
        "N" - 1
      ) * (
        "VARIANCE" - "ARM_THETA" * "XY_COVARIANCE"
      ) / NULLIF("N" - 2, 0) * (
        "INV_N" + CASE
          WHEN "X_VARIANCE" > 0
          THEN (
            "X_MEAN" - "POOLED_X_MEAN"
          ) * (
            "X_MEAN" - "POOLED_X_MEAN"
          ) / (
            (
              "N" - 1
            ) * "X_VARIANCE"
          )
          ELSE 0
        END
      )
    END AS "ADJUSTED_VARIANCE_OF_MEAN",
    CASE
      WHEN "METHOD" = 'cuped_welch_t'
      THEN (
        "CONTROL_N" - 1
      ) * (
        "CONTROL_VARIANCE" - "CONTROL_ARM_THETA" * "CONTROL_XY_COVARIANCE"
      ) / NULLIF("CONTROL_N" - 2, 0) * (
        "INV_CONTROL_N" + CASE
          WHEN "CONTROL_X_VARIANCE" > 0
          THEN (
            "CONTROL_X_MEAN" - "POOLED_X_MEAN"
          ) * (
            "CONTROL_X_MEAN" - "POOLED_X_MEAN"
          ) / (
            (
              "CONTROL_N" - 1
            ) * "CONTROL_X_VARIANCE"
          )
          ELSE 0
        END
      )
    END AS "CONTROL_ADJUSTED_VARIANCE_OF_MEAN"
  FROM "ARM_VALUES"
), "COMPARED" AS (
  SELECT
    *,
    CASE WHEN "IS_CONTROL" = 0 THEN "VALUE" - "CONTROL_VALUE" END AS "DIFFERENCE",
    CASE
      WHEN "IS_CONTROL" = 1
      THEN NULL
      WHEN "METHOD" = 'cuped_welch_t'
      THEN (
        "MEAN" - "ARM_THETA" * (
          "X_MEAN" - "POOLED_X_MEAN"
        )
      ) - (
        "CONTROL_MEAN" - "CONTROL_ARM_THETA" * (
          "CONTROL_X_MEAN" - "POOLED_X_MEAN"
        )
      )
      ELSE "VALUE" - "CONTROL_VALUE"
    END AS "ESTIMATE",
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
      WHEN "METHOD" = 'cuped_welch_t'
      THEN SQRT(
        CASE
          WHEN "ADJUSTED_VARIANCE_OF_MEAN" + "CONTROL_ADJUSTED_VARIANCE_OF_MEAN" < 0
          THEN NULL
          ELSE "ADJUSTED_VARIANCE_OF_MEAN" + "CONTROL_ADJUSTED_VARIANCE_OF_MEAN"
        END
      )
      ELSE SQRT(
        CASE
          WHEN "VALUE_VARIANCE" + "CONTROL_VALUE_VARIANCE" < 0
          THEN NULL
          ELSE "VALUE_VARIANCE" + "CONTROL_VALUE_VARIANCE"
        END
      )
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
      WHEN "METHOD" = 'cuped_welch_t'
      THEN SQRT(
        CASE
          WHEN "ADJUSTED_VARIANCE_OF_MEAN" + "CONTROL_ADJUSTED_VARIANCE_OF_MEAN" < 0
          THEN NULL
          ELSE "ADJUSTED_VARIANCE_OF_MEAN" + "CONTROL_ADJUSTED_VARIANCE_OF_MEAN"
        END
      )
      ELSE SQRT(
        CASE
          WHEN "VALUE_VARIANCE" + "CONTROL_VALUE_VARIANCE" < 0
          THEN NULL
          ELSE "VALUE_VARIANCE" + "CONTROL_VALUE_VARIANCE"
        END
      )
    END AS "NULL_STD_ERROR",
    CASE
      WHEN "IS_CONTROL" = 1
      THEN NULL
      WHEN "METHOD" = 'welch_t'
      THEN (
        "VALUE_VARIANCE" + "CONTROL_VALUE_VARIANCE"
      ) * (
        "VALUE_VARIANCE" + "CONTROL_VALUE_VARIANCE"
      ) / NULLIF(
        "VALUE_VARIANCE" * "VALUE_VARIANCE" / NULLIF("N" - 1, 0) + "CONTROL_VALUE_VARIANCE" * "CONTROL_VALUE_VARIANCE" / NULLIF("CONTROL_N" - 1, 0),
        0
      )
      WHEN "METHOD" = 'cuped_welch_t'
      THEN (
        "ADJUSTED_VARIANCE_OF_MEAN" + "CONTROL_ADJUSTED_VARIANCE_OF_MEAN"
      ) * (
        "ADJUSTED_VARIANCE_OF_MEAN" + "CONTROL_ADJUSTED_VARIANCE_OF_MEAN"
      ) / NULLIF(
        "ADJUSTED_VARIANCE_OF_MEAN" * "ADJUSTED_VARIANCE_OF_MEAN" / NULLIF("N" - 2, 0) + "CONTROL_ADJUSTED_VARIANCE_OF_MEAN" * "CONTROL_ADJUSTED_VARIANCE_OF_MEAN" / NULLIF("CONTROL_N" - 2, 0),
        0
      )
      WHEN "METHOD" = 'student_t'
      THEN NULLIF("N" + "CONTROL_N" - 2, 0)
    END AS "DF",
    CASE
      WHEN "METHOD" = 'cuped_welch_t' AND "IS_CONTROL" = 0
      THEN 1 - (
        "ADJUSTED_VARIANCE_OF_MEAN" + "CONTROL_ADJUSTED_VARIANCE_OF_MEAN"
      ) / NULLIF("VARIANCE" / NULLIF("N", 0) + "CONTROL_VARIANCE" / NULLIF("CONTROL_N", 0), 0)
    END AS "VARIANCE_REDUCTION",
    CASE
      WHEN "TARGET" IS NULL
      THEN NULL
      WHEN "KIND" = 'proportion'
      THEN (
        "VALUE" - "TARGET"
      ) / NULLIF(SQRT("TARGET" * (
        1 - "TARGET"
      ) * "INV_N"), 0)
      ELSE (
        "VALUE" - "TARGET"
      ) / NULLIF(SQRT(CASE WHEN "VALUE_VARIANCE" < 0 THEN NULL ELSE "VALUE_VARIANCE" END), 0)
    END AS "TARGET_STATISTIC",
    CASE WHEN NOT "TARGET" IS NULL AND "KIND" = 'mean' THEN "N" - 1 END AS "TARGET_DF"
  FROM "ADJUSTED"
), "LIFT_TERMS" AS (
  SELECT
    *,
    CASE
      WHEN "METHOD" = 'two_proportion_z'
      THEN "CONTROL_MEAN" * (
        1 - "CONTROL_MEAN"
      ) * "INV_CONTROL_N"
      WHEN "METHOD" = 'z_known_sigma'
      THEN "SIGMA" * "SIGMA" * "INV_CONTROL_N"
      WHEN "METHOD" = 'student_t'
      THEN "POOLED_VARIANCE" * "INV_CONTROL_N"
      ELSE "CONTROL_VALUE_VARIANCE"
    END AS "LIFT_CONTROL_VARIANCE",
    CASE
      WHEN "METHOD" = 'cuped_welch_t'
      THEN (
        "CONTROL_VARIANCE" - (
          "CONTROL_ARM_THETA" + (
            "ARM_THETA" - "CONTROL_ARM_THETA"
          ) * "CONTROL_N" / NULLIF("N" + "CONTROL_N", 0)
        ) * "CONTROL_XY_COVARIANCE"
      ) * "INV_CONTROL_N"
    END AS "CUPED_CONTROL_COVARIANCE"
  FROM "COMPARED"
), "LIFTED" AS (
  SELECT
    *,
    "ESTIMATE" / NULLIF("CONTROL_VALUE", 0) AS "RELATIVE_LIFT",
    SQRT(
      CASE
        WHEN "STD_ERROR" * "STD_ERROR" / NULLIF("CONTROL_VALUE" * "CONTROL_VALUE", 0) + "ESTIMATE" * "ESTIMATE" * "LIFT_CONTROL_VARIANCE" / NULLIF("CONTROL_VALUE" * "CONTROL_VALUE" * "CONTROL_VALUE" * "CONTROL_VALUE", 0) + 2 * "ESTIMATE" * CASE
          WHEN "METHOD" = 'cuped_welch_t'
          THEN "CUPED_CONTROL_COVARIANCE"
          ELSE "LIFT_CONTROL_VARIANCE"
        END / NULLIF("CONTROL_VALUE" * "CONTROL_VALUE" * "CONTROL_VALUE", 0) < 0
        THEN NULL
        ELSE "STD_ERROR" * "STD_ERROR" / NULLIF("CONTROL_VALUE" * "CONTROL_VALUE", 0) + "ESTIMATE" * "ESTIMATE" * "LIFT_CONTROL_VARIANCE" / NULLIF("CONTROL_VALUE" * "CONTROL_VALUE" * "CONTROL_VALUE" * "CONTROL_VALUE", 0) + 2 * "ESTIMATE" * CASE
          WHEN "METHOD" = 'cuped_welch_t'
          THEN "CUPED_CONTROL_COVARIANCE"
          ELSE "LIFT_CONTROL_VARIANCE"
        END / NULLIF("CONTROL_VALUE" * "CONTROL_VALUE" * "CONTROL_VALUE", 0)
      END
    ) AS "LIFT_STD_ERROR"
  FROM "LIFT_TERMS"
), "SEQUENTIAL" AS (
  SELECT
    *,
    CAST(NULL AS DOUBLE) AS "MIXING_VARIANCE",
    CAST(NULL AS DOUBLE) AS "SEQUENTIAL_VARIANCE"
  FROM "LIFTED"
), "MONITORED" AS (
  SELECT
    *,
    CASE
      WHEN "SEQUENTIAL_VARIANCE" > 0 AND "MIXING_VARIANCE" > 0
      THEN 0.5 * LN("SEQUENTIAL_VARIANCE" / (
        "SEQUENTIAL_VARIANCE" + "MIXING_VARIANCE"
      )) + "MIXING_VARIANCE" * "ESTIMATE" * "ESTIMATE" / (
        2 * "SEQUENTIAL_VARIANCE" * (
          "SEQUENTIAL_VARIANCE" + "MIXING_VARIANCE"
        )
      )
    END AS "LOG_LIKELIHOOD_RATIO",
    CASE
      WHEN "SEQUENTIAL_VARIANCE" > 0 AND "MIXING_VARIANCE" > 0
      THEN SQRT(
        "SEQUENTIAL_VARIANCE" * (
          "SEQUENTIAL_VARIANCE" + "MIXING_VARIANCE"
        ) / "MIXING_VARIANCE" * (
          2 * LN(1 / 0.05) + LN((
            "SEQUENTIAL_VARIANCE" + "MIXING_VARIANCE"
          ) / "SEQUENTIAL_VARIANCE")
        )
      )
    END AS "SEQUENCE_HALF_WIDTH"
  FROM "SEQUENTIAL"
), "MONITORED_P" AS (
  SELECT
    *,
    CASE
      WHEN "LOG_LIKELIHOOD_RATIO" IS NULL
      THEN NULL
      WHEN "LOG_LIKELIHOOD_RATIO" <= 0
      THEN 1.0
      WHEN "LOG_LIKELIHOOD_RATIO" > 700
      THEN 0.0
      ELSE EXP(-"LOG_LIKELIHOOD_RATIO")
    END AS "SEQUENTIAL_P_VALUE"
  FROM "MONITORED"
), "RESULT" AS (
  SELECT
    "METRIC_INDEX",
    "METRIC",
    "KIND",
    "ROLE",
    "METHOD",
    "SEGMENT_INDEX",
    "SEGMENT",
    "SEGMENT_VALUE",
    "ARM",
    "IS_CONTROL",
    "UNITS",
    "EXCLUDED_UNITS",
    "N",
    "TOTAL",
    "MEAN",
    "VARIANCE",
    "INVALID",
    "X_N",
    "X_TOTAL",
    "X_MEAN",
    "X_VARIANCE",
    "XY_COVARIANCE",
    "VALUE",
    SQRT("VALUE_VARIANCE") AS "VALUE_STD_ERROR",
    "CONTROL_N",
    "CONTROL_TOTAL",
    "CONTROL_MEAN",
    "CONTROL_VARIANCE",
    "CONTROL_VALUE",
    SQRT("CONTROL_VALUE_VARIANCE") AS "CONTROL_VALUE_STD_ERROR",
    "DIFFERENCE",
    "ESTIMATE",
    "STD_ERROR",
    "NULL_STD_ERROR",
    "ESTIMATE" / NULLIF("NULL_STD_ERROR", 0) AS "STATISTIC",
    "DF",
    "THETA",
    "VARIANCE_REDUCTION",
    "RELATIVE_LIFT",
    "LIFT_STD_ERROR",
    "DIRECTION",
    "MARGIN",
    "RELATIVE_MARGIN",
    CASE
      WHEN "IS_CONTROL" = 1
      THEN NULL
      WHEN NOT "MARGIN" IS NULL AND "DIRECTION" = 'higher'
      THEN (
        "ESTIMATE" + "MARGIN"
      ) / NULLIF("STD_ERROR", 0)
      WHEN NOT "MARGIN" IS NULL AND "DIRECTION" = 'lower'
      THEN (
        "MARGIN" - "ESTIMATE"
      ) / NULLIF("STD_ERROR", 0)
      WHEN NOT "RELATIVE_MARGIN" IS NULL AND "DIRECTION" = 'higher'
      THEN (
        "RELATIVE_LIFT" + "RELATIVE_MARGIN"
      ) / NULLIF("LIFT_STD_ERROR", 0)
      WHEN NOT "RELATIVE_MARGIN" IS NULL AND "DIRECTION" = 'lower'
      THEN (
        "RELATIVE_MARGIN" - "RELATIVE_LIFT"
      ) / NULLIF("LIFT_STD_ERROR", 0)
    END AS "MARGIN_STATISTIC",
    "TARGET",
    "TARGET_STATISTIC",
    "TARGET_DF",
    "ARM_THETA" AS "THETA_TREATMENT",
    "CONTROL_ARM_THETA" AS "THETA_CONTROL"
  FROM "MONITORED_P"
), "SRM_ROWS" AS (
  SELECT
    "S".*,
    CASE
      WHEN "S"."SEGMENT_INDEX" = 0 AND "S"."METRIC_INDEX" = 0
      THEN CAST("S"."UNITS" AS DOUBLE)
    END AS "SRM_UNITS",
    CASE
      WHEN "S"."SEGMENT_INDEX" = 0 AND "S"."METRIC_INDEX" = 0
      THEN CAST(1 AS DOUBLE)
    END AS "SRM_WEIGHT"
  FROM "RESULT" AS "S"
), "SRM_SUMS" AS (
  SELECT
    *,
    SUM("SRM_UNITS") OVER () AS "SRM_TOTAL",
    SUM("SRM_WEIGHT") OVER () AS "SRM_PRESENT_WEIGHT",
    COUNT("SRM_UNITS") OVER () AS "SRM_PRESENT_ARMS"
  FROM "SRM_ROWS"
), "SRM_TERMS" AS (
  SELECT
    *,
    (
      "SRM_UNITS" - "SRM_TOTAL" * "SRM_WEIGHT" / "SRM_PRESENT_WEIGHT"
    ) * (
      "SRM_UNITS" - "SRM_TOTAL" * "SRM_WEIGHT" / "SRM_PRESENT_WEIGHT"
    ) / NULLIF("SRM_TOTAL" * "SRM_WEIGHT" / "SRM_PRESENT_WEIGHT", 0) AS "SRM_TERM"
  FROM "SRM_SUMS"
), "SRM_STATISTIC" AS (
  SELECT
    *,
    SUM("SRM_TERM") OVER () AS "SRM_CHI_SQUARE",
    "SRM_PRESENT_ARMS" - 1 AS "SRM_DF"
  FROM "SRM_TERMS"
), "SRM" AS (
  SELECT
    *,
    CASE
      WHEN "SRM_DF" >= 1
      THEN CASE
        WHEN CAST("SRM_CHI_SQUARE" AS DOUBLE) IS NULL
        OR CAST("SRM_DF" AS DOUBLE) IS NULL
        OR CAST("SRM_DF" AS DOUBLE) <= 0.0
        THEN NULL
        WHEN CAST("SRM_CHI_SQUARE" AS DOUBLE) <= 0.0
        THEN 1.0
        WHEN CAST("SRM_DF" AS DOUBLE) = 1.0
        THEN CASE
          WHEN SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) > 38.0
          THEN 0.0
          ELSE 2.0 * CASE
            WHEN SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) < 3.0
            THEN EXP(
              -0.5 * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
            ) * (
              (
                (
                  (
                    (
                      (
                        0.0352624965998911 * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 0.700383064443688
                      ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 6.37396220353165
                    ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 33.912866078383
                  ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 112.079291497871
                ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 221.213596169931
              ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 220.206867912376
            ) / (
              (
                (
                  (
                    (
                      (
                        (
                          0.0883883476483184 * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 1.75566716318264
                        ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 16.064177579207
                      ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 86.7807322029461
                    ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 296.564248779674
                  ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 637.333633378831
                ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 793.826512519948
              ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 440.413735824752
            )
            ELSE EXP(
              -0.5 * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
            ) * 0.3989422804014327 * (
              EXP(
                -1.779355901402371 - 0.0024879380188789694 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -1.2335582973695354 - 0.06923918433800227 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -1.3216829568871193 - 0.4200613752963293 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -1.7957527120028594 - 1.457447795446018 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -2.592588996560229 - 3.7790482726969685 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -3.6903037756070773 - 8.196898098571257 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -5.082794644999896 - 15.765094976695384 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -6.77238349275405 - 27.818470687084773 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -8.767311223343135 - 46.026187267934304 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -11.081049490244487 - 72.46638338239725 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -13.732561585402326 - 109.73164510218608 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -16.747306821312094 - 161.08142520326024 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -20.159099743627795 - 230.6691721355028 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -24.01323430703992 - 323.89458753635904 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -28.371778014826944 - 447.97891338987085 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -33.32302001737664 - 612.9702886561737 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -38.99983382185025 - 833.6692742990255 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -45.62022978993104 - 1133.8319165346581 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -53.59689666481805 - 1557.4224611276752 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -63.967701853691906 - 2212.7489970368088 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              )
            ) / SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
          END
        END
        WHEN CAST("SRM_DF" AS DOUBLE) = FLOOR(CAST("SRM_DF" AS DOUBLE))
        AND CAST("SRM_DF" AS DOUBLE) <= 10.0
        AND FLOOR(CAST("SRM_DF" AS DOUBLE) / 2.0) * 2.0 = CAST("SRM_DF" AS DOUBLE)
        THEN CASE
          WHEN (
            -0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)
          ) < -700.0
          THEN 0.0
          ELSE EXP(-0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE))
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 4.0
          THEN CASE
            WHEN (
              1.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 0.0
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              1.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 0.0
            )
          END
          ELSE 0.0
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 6.0
          THEN CASE
            WHEN (
              2.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 0.693147180559945
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              2.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 0.693147180559945
            )
          END
          ELSE 0.0
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 8.0
          THEN CASE
            WHEN (
              3.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 1.7917594692280554
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              3.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 1.7917594692280554
            )
          END
          ELSE 0.0
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 10.0
          THEN CASE
            WHEN (
              4.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 3.178053830347945
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              4.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 3.178053830347945
            )
          END
          ELSE 0.0
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 12.0
          THEN CASE
            WHEN (
              5.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 4.787491742782047
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              5.0 * LN(0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) - 4.787491742782047
            )
          END
          ELSE 0.0
        END
        WHEN CAST("SRM_DF" AS DOUBLE) = FLOOR(CAST("SRM_DF" AS DOUBLE))
        AND CAST("SRM_DF" AS DOUBLE) <= 10.0
        THEN CASE
          WHEN SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) > 38.0
          THEN 0.0
          ELSE 2.0 * CASE
            WHEN SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) < 3.0
            THEN EXP(
              -0.5 * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
            ) * (
              (
                (
                  (
                    (
                      (
                        0.0352624965998911 * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 0.700383064443688
                      ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 6.37396220353165
                    ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 33.912866078383
                  ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 112.079291497871
                ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 221.213596169931
              ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 220.206867912376
            ) / (
              (
                (
                  (
                    (
                      (
                        (
                          0.0883883476483184 * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 1.75566716318264
                        ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 16.064177579207
                      ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 86.7807322029461
                    ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 296.564248779674
                  ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 637.333633378831
                ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 793.826512519948
              ) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) + 440.413735824752
            )
            ELSE EXP(
              -0.5 * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
            ) * 0.3989422804014327 * (
              EXP(
                -1.779355901402371 - 0.0024879380188789694 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -1.2335582973695354 - 0.06923918433800227 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -1.3216829568871193 - 0.4200613752963293 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -1.7957527120028594 - 1.457447795446018 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -2.592588996560229 - 3.7790482726969685 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -3.6903037756070773 - 8.196898098571257 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -5.082794644999896 - 15.765094976695384 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -6.77238349275405 - 27.818470687084773 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -8.767311223343135 - 46.026187267934304 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -11.081049490244487 - 72.46638338239725 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -13.732561585402326 - 109.73164510218608 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -16.747306821312094 - 161.08142520326024 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -20.159099743627795 - 230.6691721355028 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -24.01323430703992 - 323.89458753635904 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -28.371778014826944 - 447.97891338987085 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -33.32302001737664 - 612.9702886561737 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -38.99983382185025 - 833.6692742990255 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -45.62022978993104 - 1133.8319165346581 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -53.59689666481805 - 1557.4224611276752 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              ) + EXP(
                -63.967701853691906 - 2212.7489970368088 / (
                  SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE)) * SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
                )
              )
            ) / SQRT(CAST("SRM_CHI_SQUARE" AS DOUBLE))
          END
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 3.0
          THEN CASE
            WHEN (
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                1.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.0
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                1.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 0.0
            )
          END
          ELSE 0.0
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 5.0
          THEN CASE
            WHEN (
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                2.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 1.0986122886681098
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                2.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 1.0986122886681098
            )
          END
          ELSE 0.0
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 7.0
          THEN CASE
            WHEN (
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                3.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 2.70805020110221
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                3.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 2.70805020110221
            )
          END
          ELSE 0.0
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 9.0
          THEN CASE
            WHEN (
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                4.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 4.653960350157523
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                4.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 4.653960350157523
            )
          END
          ELSE 0.0
        END + CASE
          WHEN CAST("SRM_DF" AS DOUBLE) >= 11.0
          THEN CASE
            WHEN (
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                5.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 6.851184927493742
            ) < -700.0
            THEN 0.0
            ELSE EXP(
              -0.22579135264472744 - 0.5 * CAST("SRM_CHI_SQUARE" AS DOUBLE) + (
                5.0 - 0.5
              ) * LN(CAST("SRM_CHI_SQUARE" AS DOUBLE)) - 6.851184927493742
            )
          END
          ELSE 0.0
        END
        ELSE CASE
          WHEN (
            (
              POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
            ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
          ) > 38.0
          THEN 0.0
          WHEN (
            (
              POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
            ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
          ) < -38.0
          THEN 1.0
          ELSE CASE
            WHEN (
              (
                POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
              ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
            ) < 0.0
            THEN 1.0
            ELSE 0.0
          END + CASE
            WHEN (
              (
                POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
              ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
            ) < 0.0
            THEN -1.0
            ELSE 1.0
          END * CASE
            WHEN ABS(
              (
                (
                  POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
              )
            ) < 3.0
            THEN EXP(
              -0.5 * ABS(
                (
                  (
                    POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                  ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                )
              ) * ABS(
                (
                  (
                    POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                  ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                )
              )
            ) * (
              (
                (
                  (
                    (
                      (
                        0.0352624965998911 * ABS(
                          (
                            (
                              POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                            ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                          )
                        ) + 0.700383064443688
                      ) * ABS(
                        (
                          (
                            POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                          ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                        )
                      ) + 6.37396220353165
                    ) * ABS(
                      (
                        (
                          POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                        ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                      )
                    ) + 33.912866078383
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) + 112.079291497871
                ) * ABS(
                  (
                    (
                      POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                    ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                  )
                ) + 221.213596169931
              ) * ABS(
                (
                  (
                    POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                  ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                )
              ) + 220.206867912376
            ) / (
              (
                (
                  (
                    (
                      (
                        (
                          0.0883883476483184 * ABS(
                            (
                              (
                                POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                              ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                            )
                          ) + 1.75566716318264
                        ) * ABS(
                          (
                            (
                              POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                            ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                          )
                        ) + 16.064177579207
                      ) * ABS(
                        (
                          (
                            POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                          ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                        )
                      ) + 86.7807322029461
                    ) * ABS(
                      (
                        (
                          POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                        ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                      )
                    ) + 296.564248779674
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) + 637.333633378831
                ) * ABS(
                  (
                    (
                      POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                    ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                  )
                ) + 793.826512519948
              ) * ABS(
                (
                  (
                    POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                  ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                )
              ) + 440.413735824752
            )
            ELSE EXP(
              -0.5 * ABS(
                (
                  (
                    POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                  ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                )
              ) * ABS(
                (
                  (
                    POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                  ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                )
              )
            ) * 0.3989422804014327 * (
              EXP(
                -1.779355901402371 - 0.0024879380188789694 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -1.2335582973695354 - 0.06923918433800227 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -1.3216829568871193 - 0.4200613752963293 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -1.7957527120028594 - 1.457447795446018 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -2.592588996560229 - 3.7790482726969685 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -3.6903037756070773 - 8.196898098571257 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -5.082794644999896 - 15.765094976695384 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -6.77238349275405 - 27.818470687084773 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -8.767311223343135 - 46.026187267934304 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -11.081049490244487 - 72.46638338239725 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -13.732561585402326 - 109.73164510218608 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -16.747306821312094 - 161.08142520326024 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -20.159099743627795 - 230.6691721355028 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -24.01323430703992 - 323.89458753635904 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -28.371778014826944 - 447.97891338987085 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -33.32302001737664 - 612.9702886561737 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -38.99983382185025 - 833.6692742990255 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -45.62022978993104 - 1133.8319165346581 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -53.59689666481805 - 1557.4224611276752 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              ) + EXP(
                -63.967701853691906 - 2212.7489970368088 / (
                  ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  ) * ABS(
                    (
                      (
                        POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                      ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
                    )
                  )
                )
              )
            ) / ABS(
              (
                (
                  POWER(CAST("SRM_CHI_SQUARE" AS DOUBLE) / CAST("SRM_DF" AS DOUBLE), 0.3333333333333333) - 1.0 + 0.2222222222222222 / CAST("SRM_DF" AS DOUBLE)
                ) * SQRT(4.5 * CAST("SRM_DF" AS DOUBLE))
              )
            )
          END
        END
      END
    END AS "SRM_P_VALUE"
  FROM "SRM_STATISTIC"
), "READOUT_ROWS" AS (
  SELECT
    "S".*,
    ROW_NUMBER() OVER (ORDER BY "S"."METRIC_INDEX", "S"."SEGMENT_INDEX", "S"."SEGMENT_VALUE", "S"."ARM") AS "ROW_ID",
    CAST(ABS("S"."STATISTIC") AS DOUBLE) AS "ABS_STATISTIC",
    CAST(ABS("S"."MARGIN_STATISTIC") AS DOUBLE) AS "ABS_MARGIN_STATISTIC",
    CASE WHEN "S"."SEGMENT_INDEX" > 0 THEN 'segment' ELSE "S"."ROLE" END AS "FAMILY"
  FROM "SRM" AS "S"
  WHERE
    "S"."IS_CONTROL" = 0
), "T_NODES" AS (
  SELECT
    0 AS "T_NODES_J",
    CAST(0.0006144963737869658 AS DOUBLE) AS "T_NODES_S",
    CAST(-6.452438331652476 AS DOUBLE) AS "T_NODES_LW",
    CAST(0.0 AS DOUBLE) AS "T_NODES_LC"
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
), "TD__INPUT" AS (
  SELECT
    "TD__SRC".*,
    CAST("DF" AS DOUBLE) AS "TD__DF",
    CAST("ABS_STATISTIC" AS DOUBLE) AS "TD__T0",
    CAST("MARGIN_STATISTIC" AS DOUBLE) AS "TD__T1",
    CAST(0.975 AS DOUBLE) AS "TD__Q0",
    COUNT(*) OVER (PARTITION BY "TD__SRC"."ROW_ID") AS "TD__BARRIER0"
  FROM "READOUT_ROWS" AS "TD__SRC"
), "TD__PREP" AS (
  SELECT
    "TD__I0".*,
    CASE
      WHEN "TD__Q0" > 0.0 AND "TD__Q0" < 0.5
      THEN "TD__Q0"
      WHEN "TD__Q0" >= 0.5 AND "TD__Q0" < 1.0
      THEN 1.0 - "TD__Q0"
    END AS "TD__P0",
    2.0 * CASE
      WHEN "TD__Q0" > 0.0 AND "TD__Q0" < 0.5
      THEN "TD__Q0"
      WHEN "TD__Q0" >= 0.5 AND "TD__Q0" < 1.0
      THEN 1.0 - "TD__Q0"
    END AS "TD__P20",
    CASE
      WHEN "TD__DF" >= 1.0
      THEN CASE WHEN "TD__DF" > 1e7 THEN 1e7 ELSE "TD__DF" END
    END AS "TD__N",
    CASE WHEN "TD__DF" > 0.0 THEN "TD__DF" END AS "TD__DFP"
  FROM "TD__INPUT" AS "TD__I0"
), "TD__H1" AS (
  SELECT
    "TD__I1".*,
    1.0 / (
      "TD__N" - 0.5
    ) AS "TD__A",
    CAST(1.9599639845400536 AS DOUBLE) AS "TD__Z0",
    COUNT(*) OVER (PARTITION BY "TD__I1"."ROW_ID") AS "TD__BARRIER1"
  FROM "TD__PREP" AS "TD__I1"
), "TD__H2" AS (
  SELECT
    "TD__I2".*,
    48.0 / (
      "TD__A" * "TD__A"
    ) AS "TD__B",
    (
      (
        20700.0 * "TD__A" / (
          48.0 / (
            "TD__A" * "TD__A"
          )
        ) - 98.0
      ) * "TD__A" - 16.0
    ) * "TD__A" + 96.36 AS "TD__C"
  FROM "TD__H1" AS "TD__I2"
), "TD__H3" AS (
  SELECT
    "TD__I3".*,
    (
      (
        94.5 / (
          "TD__B" + "TD__C"
        ) - 3.0
      ) / "TD__B" + 1.0
    ) * SQRT("TD__A" * 1.5707963267948966) * "TD__N" AS "TD__D"
  FROM "TD__H2" AS "TD__I3"
), "TD__H4" AS (
  SELECT
    "TD__I4".*,
    CASE
      WHEN (
        (
          2.0 / "TD__N"
        ) * LN(CASE WHEN "TD__D" * "TD__P20" > 0.0 THEN "TD__D" * "TD__P20" END)
      ) < -700.0
      THEN 0.0
      ELSE EXP(
        (
          2.0 / "TD__N"
        ) * LN(CASE WHEN "TD__D" * "TD__P20" > 0.0 THEN "TD__D" * "TD__P20" END)
      )
    END AS "TD__YY0",
    (
      (
        (
          (
            (
              0.4 * "TD__Z0" * "TD__Z0" + 6.3
            ) * "TD__Z0" * "TD__Z0" + 36.0
          ) * "TD__Z0" * "TD__Z0" + 94.5
        ) / NULLIF(
          (
            (
              (
                0.05 * "TD__D" * "TD__Z0" - 5.0
              ) * "TD__Z0" - 7.0
            ) * "TD__Z0" - 2.0
          ) * "TD__Z0" + "TD__B" + "TD__C" + CASE
            WHEN "TD__N" < 5.0
            THEN 0.3 * (
              "TD__N" - 4.5
            ) * (
              "TD__Z0" + 0.6
            )
            ELSE 0.0
          END,
          0.0
        ) - "TD__Z0" * "TD__Z0" - 3.0
      ) / "TD__B" + 1.0
    ) * "TD__Z0" AS "TD__YB0",
    COUNT(*) OVER (PARTITION BY "TD__I4"."ROW_ID") AS "TD__BARRIER4"
  FROM "TD__H3" AS "TD__I4"
), "TD__H5" AS (
  SELECT
    "TD__I5".*,
    "TD__A" * CASE WHEN ABS("TD__YB0") < 1e-100 THEN 0.0 ELSE "TD__YB0" * "TD__YB0" END AS "TD__YA0",
    COUNT(*) OVER (PARTITION BY "TD__I5"."ROW_ID") AS "TD__BARRIER5"
  FROM "TD__H4" AS "TD__I5"
), "TD__H6" AS (
  SELECT
    "TD__I6".*,
    CASE
      WHEN "TD__DF" = 1.0
      THEN COS("TD__P20" * 1.5707963267948966) / NULLIF(SIN("TD__P20" * 1.5707963267948966), 0.0)
      WHEN "TD__DF" = 2.0
      THEN SQRT(
        CASE
          WHEN 2.0 / NULLIF("TD__P20" * (
            2.0 - "TD__P20"
          ), 0.0) - 2.0 > 0.0
          THEN 2.0 / NULLIF("TD__P20" * (
            2.0 - "TD__P20"
          ), 0.0) - 2.0
          ELSE 0.0
        END
      )
      WHEN "TD__YY0" > 0.05 + "TD__A"
      THEN SQRT(
        "TD__N" * CASE
          WHEN "TD__YA0" > 0.1
          THEN EXP(CASE WHEN "TD__YA0" > 700.0 THEN 700.0 ELSE "TD__YA0" END) - 1.0
          ELSE (
            (
              (
                "TD__YA0" + 4.0
              ) * "TD__YA0" + 12.0
            ) * CASE WHEN ABS("TD__YA0") < 1e-100 THEN 0.0 ELSE "TD__YA0" * "TD__YA0" END
          ) / 24.0 + "TD__YA0"
        END
      )
      ELSE SQRT(
        "TD__N" * (
          (
            (
              1.0 / NULLIF(
                (
                  (
                    "TD__N" + 6.0
                  ) / NULLIF("TD__N" * "TD__YY0", 0.0) - 0.089 * "TD__D" - 0.822
                ) * (
                  "TD__N" + 2.0
                ) * 3.0,
                0.0
              ) + 0.5 / (
                "TD__N" + 4.0
              )
            ) * "TD__YY0" - 1.0
          ) * (
            "TD__N" + 1.0
          ) / (
            "TD__N" + 2.0
          ) + 1.0 / NULLIF("TD__YY0", 0.0)
        )
      )
    END AS "TD__Q0_0",
    COUNT(*) OVER (PARTITION BY "TD__I6"."ROW_ID") AS "TD__BARRIER6"
  FROM "TD__H5" AS "TD__I6"
), "TD__1A" AS (
  SELECT
    "TD__1A0".*,
    CASE WHEN "TD__DFP" > 0.0 THEN 90.0 / (
      "TD__DFP" + 1.0
    ) END AS "TD__1Y",
    -0.5 * (
      "TD__DFP" + 1.0
    ) AS "TD__1H",
    ABS("TD__T0") / NULLIF(SQRT("TD__DFP"), 0.0) AS "TD__1R0",
    ABS("TD__T1") / NULLIF(SQRT("TD__DFP"), 0.0) AS "TD__1R1",
    ABS("TD__Q0_0") / NULLIF(SQRT("TD__DFP"), 0.0) AS "TD__1R2",
    COUNT(*) OVER (PARTITION BY "TD__1A0"."ROW_ID") AS "TD__1BA"
  FROM "TD__H6" AS "TD__1A0"
), "TD__1B" AS (
  SELECT
    "TD__1B0".*,
    EXP("TD__1Y") AS "TD__1E",
    "TD__1Y" * EXP("TD__1Y") AS "TD__1EY",
    CASE WHEN "TD__1R0" < 1e-100 THEN 0.0 WHEN "TD__1R0" < 1.0 THEN "TD__1R0" ELSE 1.0 END AS "TD__1RC0",
    CASE WHEN ABS("TD__1R0") < 1e-100 THEN 0.0 ELSE "TD__1R0" * "TD__1R0" END AS "TD__1RR0",
    CASE
      WHEN "TD__1R0" <= 1.0
      THEN CASE WHEN ABS("TD__1R0") < 1e-100 THEN 0.0 ELSE "TD__1R0" * "TD__1R0" END
      WHEN "TD__1R0" < 1e100
      THEN 1.0 / (
        "TD__1R0" * "TD__1R0"
      )
      ELSE 0.0
    END AS "TD__1V0",
    CASE WHEN "TD__1R1" < 1e-100 THEN 0.0 WHEN "TD__1R1" < 1.0 THEN "TD__1R1" ELSE 1.0 END AS "TD__1RC1",
    CASE WHEN ABS("TD__1R1") < 1e-100 THEN 0.0 ELSE "TD__1R1" * "TD__1R1" END AS "TD__1RR1",
    CASE
      WHEN "TD__1R1" <= 1.0
      THEN CASE WHEN ABS("TD__1R1") < 1e-100 THEN 0.0 ELSE "TD__1R1" * "TD__1R1" END
      WHEN "TD__1R1" < 1e100
      THEN 1.0 / (
        "TD__1R1" * "TD__1R1"
      )
      ELSE 0.0
    END AS "TD__1V1",
    CASE WHEN "TD__1R2" < 1e-100 THEN 0.0 WHEN "TD__1R2" < 1.0 THEN "TD__1R2" ELSE 1.0 END AS "TD__1RC2",
    CASE WHEN ABS("TD__1R2") < 1e-100 THEN 0.0 ELSE "TD__1R2" * "TD__1R2" END AS "TD__1RR2",
    CASE
      WHEN "TD__1R2" <= 1.0
      THEN CASE WHEN ABS("TD__1R2") < 1e-100 THEN 0.0 ELSE "TD__1R2" * "TD__1R2" END
      WHEN "TD__1R2" < 1e100
      THEN 1.0 / (
        "TD__1R2" * "TD__1R2"
      )
      ELSE 0.0
    END AS "TD__1V2",
    COUNT(*) OVER (PARTITION BY "TD__1B0"."ROW_ID") AS "TD__1BB"
  FROM "TD__1A" AS "TD__1B0"
), "TD__1C" AS (
  SELECT
    "TD__1C0".*,
    CASE WHEN "TD__1EY" >= 1.0 THEN 1.0 ELSE SQRT("TD__1EY") END AS "TD__1VW",
    CASE
      WHEN "TD__1R0" < 1e-100
      THEN 0.0
      WHEN "TD__1R0" >= 1e100
      THEN -2.0 * LN("TD__1R0")
      ELSE CASE WHEN "TD__1R0" <= 1.0 THEN 0.0 ELSE -2.0 * LN("TD__1R0") END - CASE
        WHEN 1.0 + "TD__1V0" = 1.0
        THEN "TD__1V0"
        ELSE LN(1.0 + "TD__1V0") * "TD__1V0" / NULLIF((
          1.0 + "TD__1V0"
        ) - 1.0, 0.0)
      END
    END AS "TD__1LNX0",
    CASE
      WHEN "TD__1R0" >= 1.0
      THEN 0.0
      WHEN "TD__1RR0" * "TD__1E" + "TD__1EY" >= 1.0
      THEN 1.0 - "TD__1RC0"
      ELSE SQRT("TD__1RR0" * "TD__1E" + "TD__1EY") - "TD__1RC0"
    END AS "TD__1LEN0",
    CASE
      WHEN "TD__1R1" < 1e-100
      THEN 0.0
      WHEN "TD__1R1" >= 1e100
      THEN -2.0 * LN("TD__1R1")
      ELSE CASE WHEN "TD__1R1" <= 1.0 THEN 0.0 ELSE -2.0 * LN("TD__1R1") END - CASE
        WHEN 1.0 + "TD__1V1" = 1.0
        THEN "TD__1V1"
        ELSE LN(1.0 + "TD__1V1") * "TD__1V1" / NULLIF((
          1.0 + "TD__1V1"
        ) - 1.0, 0.0)
      END
    END AS "TD__1LNX1",
    CASE
      WHEN "TD__1R1" >= 1.0
      THEN 0.0
      WHEN "TD__1RR1" * "TD__1E" + "TD__1EY" >= 1.0
      THEN 1.0 - "TD__1RC1"
      ELSE SQRT("TD__1RR1" * "TD__1E" + "TD__1EY") - "TD__1RC1"
    END AS "TD__1LEN1",
    CASE
      WHEN "TD__1R2" < 1e-100
      THEN 0.0
      WHEN "TD__1R2" >= 1e100
      THEN -2.0 * LN("TD__1R2")
      ELSE CASE WHEN "TD__1R2" <= 1.0 THEN 0.0 ELSE -2.0 * LN("TD__1R2") END - CASE
        WHEN 1.0 + "TD__1V2" = 1.0
        THEN "TD__1V2"
        ELSE LN(1.0 + "TD__1V2") * "TD__1V2" / NULLIF((
          1.0 + "TD__1V2"
        ) - 1.0, 0.0)
      END
    END AS "TD__1LNX2",
    CASE
      WHEN "TD__1R2" >= 1.0
      THEN 0.0
      WHEN "TD__1RR2" * "TD__1E" + "TD__1EY" >= 1.0
      THEN 1.0 - "TD__1RC2"
      ELSE SQRT("TD__1RR2" * "TD__1E" + "TD__1EY") - "TD__1RC2"
    END AS "TD__1LEN2",
    COUNT(*) OVER (PARTITION BY "TD__1C0"."ROW_ID") AS "TD__1BC"
  FROM "TD__1B" AS "TD__1C0"
), "TD__1D" AS (
  SELECT
    "TD__1D0".*,
    "T_NODES_J" AS "TD__1J",
    "T_NODES_LW" AS "TD__1LW",
    "T_NODES_LC" - LN("TD__DFP" + 2.0 * "T_NODES_J") AS "TD__1LC",
    0.5 * "TD__DFP" + "T_NODES_J" AS "TD__1HX",
    CASE
      WHEN ABS("TD__1VW" * "T_NODES_S") < 1e-100
      THEN 0.0
      ELSE (
        "TD__1VW" * "T_NODES_S"
      ) * (
        "TD__1VW" * "T_NODES_S"
      )
    END AS "TD__1U",
    CASE
      WHEN ABS((
        "TD__1RC0" + "TD__1LEN0" * "T_NODES_S"
      )) < 1e-100
      THEN 0.0
      ELSE (
        "TD__1RC0" + "TD__1LEN0" * "T_NODES_S"
      ) * (
        "TD__1RC0" + "TD__1LEN0" * "T_NODES_S"
      )
    END AS "TD__1U0",
    CASE
      WHEN ABS((
        "TD__1RC1" + "TD__1LEN1" * "T_NODES_S"
      )) < 1e-100
      THEN 0.0
      ELSE (
        "TD__1RC1" + "TD__1LEN1" * "T_NODES_S"
      ) * (
        "TD__1RC1" + "TD__1LEN1" * "T_NODES_S"
      )
    END AS "TD__1U1",
    CASE
      WHEN ABS((
        "TD__1RC2" + "TD__1LEN2" * "T_NODES_S"
      )) < 1e-100
      THEN 0.0
      ELSE (
        "TD__1RC2" + "TD__1LEN2" * "T_NODES_S"
      ) * (
        "TD__1RC2" + "TD__1LEN2" * "T_NODES_S"
      )
    END AS "TD__1U2",
    COUNT(*) OVER (PARTITION BY "TD__1D0"."ROW_ID") AS "TD__1BD"
  FROM "TD__1C" AS "TD__1D0"
  CROSS JOIN "T_NODES"
), "TD__1G" AS (
  SELECT
    "TD__1G0".*,
    "TD__1H" * CASE
      WHEN 1.0 + "TD__1U" = 1.0
      THEN "TD__1U"
      ELSE LN(1.0 + "TD__1U") * "TD__1U" / NULLIF((
        1.0 + "TD__1U"
      ) - 1.0, 0.0)
    END + "TD__1LW" + LN("TD__1VW") AS "TD__1XGW",
    "TD__1HX" * -0.6931471805599453 + "TD__1LC" AS "TD__1XSB",
    CASE
      WHEN "TD__1LEN0" > 0.0
      THEN "TD__1H" * CASE
        WHEN 1.0 + "TD__1U0" = 1.0
        THEN "TD__1U0"
        ELSE LN(1.0 + "TD__1U0") * "TD__1U0" / NULLIF((
          1.0 + "TD__1U0"
        ) - 1.0, 0.0)
      END + "TD__1LW" + LN(CASE WHEN "TD__1LEN0" > 0.0 THEN "TD__1LEN0" ELSE 1.0 END)
    END AS "TD__1XGG0",
    "TD__1HX" * "TD__1LNX0" + "TD__1LC" AS "TD__1XSS0",
    CASE
      WHEN "TD__1LEN1" > 0.0
      THEN "TD__1H" * CASE
        WHEN 1.0 + "TD__1U1" = 1.0
        THEN "TD__1U1"
        ELSE LN(1.0 + "TD__1U1") * "TD__1U1" / NULLIF((
          1.0 + "TD__1U1"
        ) - 1.0, 0.0)
      END + "TD__1LW" + LN(CASE WHEN "TD__1LEN1" > 0.0 THEN "TD__1LEN1" ELSE 1.0 END)
    END AS "TD__1XGG1",
    "TD__1HX" * "TD__1LNX1" + "TD__1LC" AS "TD__1XSS1",
    CASE
      WHEN "TD__1LEN2" > 0.0
      THEN "TD__1H" * CASE
        WHEN 1.0 + "TD__1U2" = 1.0
        THEN "TD__1U2"
        ELSE LN(1.0 + "TD__1U2") * "TD__1U2" / NULLIF((
          1.0 + "TD__1U2"
        ) - 1.0, 0.0)
      END + "TD__1LW" + LN(CASE WHEN "TD__1LEN2" > 0.0 THEN "TD__1LEN2" ELSE 1.0 END)
    END AS "TD__1XGG2",
    "TD__1HX" * "TD__1LNX2" + "TD__1LC" AS "TD__1XSS2",
    COUNT(*) OVER (PARTITION BY "TD__1G0"."ROW_ID") AS "TD__1BG"
  FROM "TD__1D" AS "TD__1G0"
), "TD__1X" AS (
  SELECT
    "TD__1X0".*,
    CASE WHEN "TD__1XGW" < -700.0 THEN 0.0 ELSE EXP("TD__1XGW") END AS "TD__1GW",
    CASE WHEN "TD__1XSB" < -700.0 THEN 0.0 ELSE EXP("TD__1XSB") END AS "TD__1SB",
    CASE
      WHEN "TD__1LEN0" > 0.0
      THEN CASE WHEN "TD__1XGG0" < -700.0 THEN 0.0 ELSE EXP("TD__1XGG0") END
      ELSE 0.0
    END AS "TD__1GG0",
    CASE WHEN "TD__1XSS0" < -700.0 THEN 0.0 ELSE EXP("TD__1XSS0") END AS "TD__1SS0",
    CASE
      WHEN "TD__1LEN1" > 0.0
      THEN CASE WHEN "TD__1XGG1" < -700.0 THEN 0.0 ELSE EXP("TD__1XGG1") END
      ELSE 0.0
    END AS "TD__1GG1",
    CASE WHEN "TD__1XSS1" < -700.0 THEN 0.0 ELSE EXP("TD__1XSS1") END AS "TD__1SS1",
    CASE
      WHEN "TD__1LEN2" > 0.0
      THEN CASE WHEN "TD__1XGG2" < -700.0 THEN 0.0 ELSE EXP("TD__1XGG2") END
      ELSE 0.0
    END AS "TD__1GG2",
    CASE WHEN "TD__1XSS2" < -700.0 THEN 0.0 ELSE EXP("TD__1XSS2") END AS "TD__1SS2",
    COUNT(*) OVER (PARTITION BY "TD__1X0"."ROW_ID") AS "TD__1BX"
  FROM "TD__1G" AS "TD__1X0"
), "TD__1SUMS" AS (
  SELECT
    "TD__1S0".*,
    SUM("TD__1GW") OVER (PARTITION BY "TD__1S0"."ROW_ID") AS "TD__1SGW",
    SUM("TD__1GG0") OVER (PARTITION BY "TD__1S0"."ROW_ID") AS "TD__1SGG0",
    SUM("TD__1SS0") OVER (PARTITION BY "TD__1S0"."ROW_ID") AS "TD__1SSS0",
    SUM("TD__1GG1") OVER (PARTITION BY "TD__1S0"."ROW_ID") AS "TD__1SGG1",
    SUM("TD__1SS1") OVER (PARTITION BY "TD__1S0"."ROW_ID") AS "TD__1SSS1",
    SUM("TD__1GG2") OVER (PARTITION BY "TD__1S0"."ROW_ID") AS "TD__1SGG2",
    SUM("TD__1SS2") OVER (PARTITION BY "TD__1S0"."ROW_ID") AS "TD__1SSS2",
    SUM("TD__1SB") OVER (PARTITION BY "TD__1S0"."ROW_ID") AS "TD__1SSB"
  FROM "TD__1X" AS "TD__1S0"
), "TD__1TAIL" AS (
  SELECT
    "TD__1T0".*,
    CASE
      WHEN "TD__1R0" IS NULL
      THEN NULL
      WHEN "TD__1R0" >= 1.0
      THEN "TD__1SSS0" / NULLIF("TD__1SGW" + "TD__1SSB", 0.0)
      ELSE (
        "TD__1SGG0" + "TD__1SSB"
      ) / NULLIF("TD__1SGW" + "TD__1SSB", 0.0)
    END AS "TD__1T20",
    CASE
      WHEN "TD__1R1" IS NULL
      THEN NULL
      WHEN "TD__1R1" >= 1.0
      THEN "TD__1SSS1" / NULLIF("TD__1SGW" + "TD__1SSB", 0.0)
      ELSE (
        "TD__1SGG1" + "TD__1SSB"
      ) / NULLIF("TD__1SGW" + "TD__1SSB", 0.0)
    END AS "TD__1T21",
    CASE
      WHEN "TD__1R2" IS NULL
      THEN NULL
      WHEN "TD__1R2" >= 1.0
      THEN "TD__1SSS2" / NULLIF("TD__1SGW" + "TD__1SSB", 0.0)
      ELSE (
        "TD__1SGG2" + "TD__1SSB"
      ) / NULLIF("TD__1SGW" + "TD__1SSB", 0.0)
    END AS "TD__1T22",
    "TD__1SGW" + "TD__1SSB" AS "TD__1W"
  FROM "TD__1SUMS" AS "TD__1T0"
  WHERE
    "TD__1T0"."TD__1J" = 0
), "TD__STEP1" AS (
  SELECT
    "TD__ST1".*,
    "TD__Q0_0" + 2.0 * (
      0.5 * "TD__1T22" - "TD__P0"
    ) / NULLIF(
      2.0 * CASE
        WHEN (
          0.5 * (
            "TD__DFP" + 1.0
          ) * "TD__1LNX2" - LN(2.0 * SQRT("TD__DFP") * "TD__1W")
        ) < -700.0
        THEN 0.0
        ELSE EXP(0.5 * (
          "TD__DFP" + 1.0
        ) * "TD__1LNX2" - LN(2.0 * SQRT("TD__DFP") * "TD__1W"))
      END - (
        0.5 * "TD__1T22" - "TD__P0"
      ) * (
        "TD__DFP" + 1.0
      ) * "TD__Q0_0" / NULLIF(
        "TD__DFP" + CASE WHEN ABS("TD__Q0_0") < 1e-100 THEN 0.0 ELSE "TD__Q0_0" * "TD__Q0_0" END,
        0.0
      ),
      0.0
    ) AS "TD__Q1_0",
    COUNT(*) OVER (PARTITION BY "TD__ST1"."ROW_ID") AS "TD__BARRIER_S1"
  FROM "TD__1TAIL" AS "TD__ST1"
), "TD__2A" AS (
  SELECT
    "TD__2A0".*,
    CASE WHEN "TD__DFP" > 0.0 THEN 90.0 / (
      "TD__DFP" + 1.0
    ) END AS "TD__2Y",
    -0.5 * (
      "TD__DFP" + 1.0
    ) AS "TD__2H",
    ABS("TD__Q1_0") / NULLIF(SQRT("TD__DFP"), 0.0) AS "TD__2R0",
    COUNT(*) OVER (PARTITION BY "TD__2A0"."ROW_ID") AS "TD__2BA"
  FROM "TD__STEP1" AS "TD__2A0"
), "TD__2B" AS (
  SELECT
    "TD__2B0".*,
    EXP("TD__2Y") AS "TD__2E",
    "TD__2Y" * EXP("TD__2Y") AS "TD__2EY",
    CASE WHEN "TD__2R0" < 1e-100 THEN 0.0 WHEN "TD__2R0" < 1.0 THEN "TD__2R0" ELSE 1.0 END AS "TD__2RC0",
    CASE WHEN ABS("TD__2R0") < 1e-100 THEN 0.0 ELSE "TD__2R0" * "TD__2R0" END AS "TD__2RR0",
    CASE
      WHEN "TD__2R0" <= 1.0
      THEN CASE WHEN ABS("TD__2R0") < 1e-100 THEN 0.0 ELSE "TD__2R0" * "TD__2R0" END
      WHEN "TD__2R0" < 1e100
      THEN 1.0 / (
        "TD__2R0" * "TD__2R0"
      )
      ELSE 0.0
    END AS "TD__2V0",
    COUNT(*) OVER (PARTITION BY "TD__2B0"."ROW_ID") AS "TD__2BB"
  FROM "TD__2A" AS "TD__2B0"
), "TD__2C" AS (
  SELECT
    "TD__2C0".*,
    CASE WHEN "TD__2EY" >= 1.0 THEN 1.0 ELSE SQRT("TD__2EY") END AS "TD__2VW",
    CASE
      WHEN "TD__2R0" < 1e-100
      THEN 0.0
      WHEN "TD__2R0" >= 1e100
      THEN -2.0 * LN("TD__2R0")
      ELSE CASE WHEN "TD__2R0" <= 1.0 THEN 0.0 ELSE -2.0 * LN("TD__2R0") END - CASE
        WHEN 1.0 + "TD__2V0" = 1.0
        THEN "TD__2V0"
        ELSE LN(1.0 + "TD__2V0") * "TD__2V0" / NULLIF((
          1.0 + "TD__2V0"
        ) - 1.0, 0.0)
      END
    END AS "TD__2LNX0",
    CASE
      WHEN "TD__2R0" >= 1.0
      THEN 0.0
      WHEN "TD__2RR0" * "TD__2E" + "TD__2EY" >= 1.0
      THEN 1.0 - "TD__2RC0"
      ELSE SQRT("TD__2RR0" * "TD__2E" + "TD__2EY") - "TD__2RC0"
    END AS "TD__2LEN0",
    COUNT(*) OVER (PARTITION BY "TD__2C0"."ROW_ID") AS "TD__2BC"
  FROM "TD__2B" AS "TD__2C0"
), "TD__2D" AS (
  SELECT
    "TD__2D0".*,
    "T_NODES_J" AS "TD__2J",
    "T_NODES_LW" AS "TD__2LW",
    "T_NODES_LC" - LN("TD__DFP" + 2.0 * "T_NODES_J") AS "TD__2LC",
    0.5 * "TD__DFP" + "T_NODES_J" AS "TD__2HX",
    CASE
      WHEN ABS("TD__2VW" * "T_NODES_S") < 1e-100
      THEN 0.0
      ELSE (
        "TD__2VW" * "T_NODES_S"
      ) * (
        "TD__2VW" * "T_NODES_S"
      )
    END AS "TD__2U",
    CASE
      WHEN ABS((
        "TD__2RC0" + "TD__2LEN0" * "T_NODES_S"
      )) < 1e-100
      THEN 0.0
      ELSE (
        "TD__2RC0" + "TD__2LEN0" * "T_NODES_S"
      ) * (
        "TD__2RC0" + "TD__2LEN0" * "T_NODES_S"
      )
    END AS "TD__2U0",
    COUNT(*) OVER (PARTITION BY "TD__2D0"."ROW_ID") AS "TD__2BD"
  FROM "TD__2C" AS "TD__2D0"
  CROSS JOIN "T_NODES"
), "TD__2G" AS (
  SELECT
    "TD__2G0".*,
    "TD__2H" * CASE
      WHEN 1.0 + "TD__2U" = 1.0
      THEN "TD__2U"
      ELSE LN(1.0 + "TD__2U") * "TD__2U" / NULLIF((
        1.0 + "TD__2U"
      ) - 1.0, 0.0)
    END + "TD__2LW" + LN("TD__2VW") AS "TD__2XGW",
    "TD__2HX" * -0.6931471805599453 + "TD__2LC" AS "TD__2XSB",
    CASE
      WHEN "TD__2LEN0" > 0.0
      THEN "TD__2H" * CASE
        WHEN 1.0 + "TD__2U0" = 1.0
        THEN "TD__2U0"
        ELSE LN(1.0 + "TD__2U0") * "TD__2U0" / NULLIF((
          1.0 + "TD__2U0"
        ) - 1.0, 0.0)
      END + "TD__2LW" + LN(CASE WHEN "TD__2LEN0" > 0.0 THEN "TD__2LEN0" ELSE 1.0 END)
    END AS "TD__2XGG0",
    "TD__2HX" * "TD__2LNX0" + "TD__2LC" AS "TD__2XSS0",
    COUNT(*) OVER (PARTITION BY "TD__2G0"."ROW_ID") AS "TD__2BG"
  FROM "TD__2D" AS "TD__2G0"
), "TD__2X" AS (
  SELECT
    "TD__2X0".*,
    CASE WHEN "TD__2XGW" < -700.0 THEN 0.0 ELSE EXP("TD__2XGW") END AS "TD__2GW",
    CASE WHEN "TD__2XSB" < -700.0 THEN 0.0 ELSE EXP("TD__2XSB") END AS "TD__2SB",
    CASE
      WHEN "TD__2LEN0" > 0.0
      THEN CASE WHEN "TD__2XGG0" < -700.0 THEN 0.0 ELSE EXP("TD__2XGG0") END
      ELSE 0.0
    END AS "TD__2GG0",
    CASE WHEN "TD__2XSS0" < -700.0 THEN 0.0 ELSE EXP("TD__2XSS0") END AS "TD__2SS0",
    COUNT(*) OVER (PARTITION BY "TD__2X0"."ROW_ID") AS "TD__2BX"
  FROM "TD__2G" AS "TD__2X0"
), "TD__2SUMS" AS (
  SELECT
    "TD__2S0".*,
    SUM("TD__2GW") OVER (PARTITION BY "TD__2S0"."ROW_ID") AS "TD__2SGW",
    SUM("TD__2GG0") OVER (PARTITION BY "TD__2S0"."ROW_ID") AS "TD__2SGG0",
    SUM("TD__2SS0") OVER (PARTITION BY "TD__2S0"."ROW_ID") AS "TD__2SSS0",
    SUM("TD__2SB") OVER (PARTITION BY "TD__2S0"."ROW_ID") AS "TD__2SSB"
  FROM "TD__2X" AS "TD__2S0"
), "TD__2TAIL" AS (
  SELECT
    "TD__2T0".*,
    CASE
      WHEN "TD__2R0" IS NULL
      THEN NULL
      WHEN "TD__2R0" >= 1.0
      THEN "TD__2SSS0" / NULLIF("TD__2SGW" + "TD__2SSB", 0.0)
      ELSE (
        "TD__2SGG0" + "TD__2SSB"
      ) / NULLIF("TD__2SGW" + "TD__2SSB", 0.0)
    END AS "TD__2T20",
    "TD__2SGW" + "TD__2SSB" AS "TD__2W"
  FROM "TD__2SUMS" AS "TD__2T0"
  WHERE
    "TD__2T0"."TD__2J" = 0
), "TD__STEP2" AS (
  SELECT
    "TD__ST2".*,
    "TD__Q1_0" + 2.0 * (
      0.5 * "TD__2T20" - "TD__P0"
    ) / NULLIF(
      2.0 * CASE
        WHEN (
          0.5 * (
            "TD__DFP" + 1.0
          ) * "TD__2LNX0" - LN(2.0 * SQRT("TD__DFP") * "TD__2W")
        ) < -700.0
        THEN 0.0
        ELSE EXP(0.5 * (
          "TD__DFP" + 1.0
        ) * "TD__2LNX0" - LN(2.0 * SQRT("TD__DFP") * "TD__2W"))
      END - (
        0.5 * "TD__2T20" - "TD__P0"
      ) * (
        "TD__DFP" + 1.0
      ) * "TD__Q1_0" / NULLIF(
        "TD__DFP" + CASE WHEN ABS("TD__Q1_0") < 1e-100 THEN 0.0 ELSE "TD__Q1_0" * "TD__Q1_0" END,
        0.0
      ),
      0.0
    ) AS "TD__Q2_0",
    COUNT(*) OVER (PARTITION BY "TD__ST2"."ROW_ID") AS "TD__BARRIER_S2"
  FROM "TD__2TAIL" AS "TD__ST2"
), "TD__CLOSED" AS (
  SELECT
    "TD__CL".*,
    CASE
      WHEN "TD__DF" IS NULL
      OR "TD__DF" <= 0.0
      OR (
        "TD__DF" < 2.0 AND "TD__DF" <> FLOOR("TD__DF")
      )
      THEN NULL
      WHEN "TD__DF" = 1.0
      THEN CASE
        WHEN "TD__1R0" <= 1.0
        THEN 1.0 - 0.6366197723675814 * ATAN("TD__1R0")
        ELSE 0.6366197723675814 * ATAN(1.0 / "TD__1R0")
      END
      WHEN "TD__DF" = 2.0
      THEN CASE
        WHEN "TD__1R0" < 1e-100
        THEN 1.0
        WHEN "TD__1R0" > 1e150
        THEN 0.0
        ELSE 1.0 / (
          SQRT(1.0 + "TD__1R0" * "TD__1R0") * (
            SQRT(1.0 + "TD__1R0" * "TD__1R0") + "TD__1R0"
          )
        )
      END
      ELSE "TD__1T20"
    END AS "TD__RT2_0",
    CASE
      WHEN "TD__DF" IS NULL
      OR "TD__DF" <= 0.0
      OR (
        "TD__DF" < 2.0 AND "TD__DF" <> FLOOR("TD__DF")
      )
      THEN NULL
      WHEN "TD__DF" = 1.0
      THEN CASE
        WHEN "TD__1R1" <= 1.0
        THEN 1.0 - 0.6366197723675814 * ATAN("TD__1R1")
        ELSE 0.6366197723675814 * ATAN(1.0 / "TD__1R1")
      END
      WHEN "TD__DF" = 2.0
      THEN CASE
        WHEN "TD__1R1" < 1e-100
        THEN 1.0
        WHEN "TD__1R1" > 1e150
        THEN 0.0
        ELSE 1.0 / (
          SQRT(1.0 + "TD__1R1" * "TD__1R1") * (
            SQRT(1.0 + "TD__1R1" * "TD__1R1") + "TD__1R1"
          )
        )
      END
      ELSE "TD__1T21"
    END AS "TD__RT2_1",
    COUNT(*) OVER (PARTITION BY "TD__CL"."ROW_ID") AS "TD__BARRIER_C"
  FROM "TD__STEP2" AS "TD__CL"
), "TD" AS (
  SELECT
    "TD__FIN".*,
    CASE WHEN "TD__T0" >= 0.0 THEN 1.0 - 0.5 * "TD__RT2_0" ELSE 0.5 * "TD__RT2_0" END AS "MAIN_T_LOWER",
    CASE WHEN "TD__T0" >= 0.0 THEN 0.5 * "TD__RT2_0" ELSE 1.0 - 0.5 * "TD__RT2_0" END AS "MAIN_T_UPPER",
    CASE
      WHEN "TD__T0" IS NULL OR "TD__DF" IS NULL
      THEN NULL
      WHEN "TD__DF" <= 0.0
      THEN 'df not positive: no t distribution'
      WHEN "TD__DF" < 2.0 AND "TD__DF" <> FLOOR("TD__DF")
      THEN 'df below 2: use the exact Python readout'
    END AS "MAIN_T_NOTE",
    CASE WHEN "TD__T1" >= 0.0 THEN 1.0 - 0.5 * "TD__RT2_1" ELSE 0.5 * "TD__RT2_1" END AS "MARGIN_T_LOWER",
    CASE WHEN "TD__T1" >= 0.0 THEN 0.5 * "TD__RT2_1" ELSE 1.0 - 0.5 * "TD__RT2_1" END AS "MARGIN_T_UPPER",
    CASE
      WHEN "TD__T1" IS NULL OR "TD__DF" IS NULL
      THEN NULL
      WHEN "TD__DF" <= 0.0
      THEN 'df not positive: no t distribution'
      WHEN "TD__DF" < 2.0 AND "TD__DF" <> FLOOR("TD__DF")
      THEN 'df below 2: use the exact Python readout'
    END AS "MARGIN_T_NOTE",
    CASE
      WHEN "TD__P0" IS NULL OR "TD__N" IS NULL
      THEN NULL
      WHEN "TD__Q0" = 0.5
      THEN 0.0
      WHEN "TD__Q0" < 0.5
      THEN -"TD__Q2_0"
      ELSE "TD__Q2_0"
    END AS "CRITICAL_T_VALUE"
  FROM "TD__CLOSED" AS "TD__FIN"
), "NORMAL_INPUTS" AS (
  SELECT
    *,
    CASE
      WHEN "ABS_STATISTIC" >= 3.0
      THEN 1.0 / (
        "ABS_STATISTIC" * "ABS_STATISTIC"
      )
    END AS "ABS_STATISTIC_INV_SQ",
    CASE
      WHEN "ABS_MARGIN_STATISTIC" >= 3.0
      THEN 1.0 / (
        "ABS_MARGIN_STATISTIC" * "ABS_MARGIN_STATISTIC"
      )
    END AS "ABS_MARGIN_INV_SQ",
    COUNT(*) OVER (PARTITION BY "ROW_ID") AS "NORMAL_BARRIER"
  FROM "TD"
), "NORMAL_TAILS" AS (
  SELECT
    *,
    CASE
      WHEN "ABS_STATISTIC" > 38.0
      THEN 0.0
      ELSE CASE
        WHEN "ABS_STATISTIC" < 3.0
        THEN EXP(-0.5 * "ABS_STATISTIC" * "ABS_STATISTIC") * (
          (
            (
              (
                (
                  (
                    0.0352624965998911 * "ABS_STATISTIC" + 0.700383064443688
                  ) * "ABS_STATISTIC" + 6.37396220353165
                ) * "ABS_STATISTIC" + 33.912866078383
              ) * "ABS_STATISTIC" + 112.079291497871
            ) * "ABS_STATISTIC" + 221.213596169931
          ) * "ABS_STATISTIC" + 220.206867912376
        ) / (
          (
            (
              (
                (
                  (
                    (
                      0.0883883476483184 * "ABS_STATISTIC" + 1.75566716318264
                    ) * "ABS_STATISTIC" + 16.064177579207
                  ) * "ABS_STATISTIC" + 86.7807322029461
                ) * "ABS_STATISTIC" + 296.564248779674
              ) * "ABS_STATISTIC" + 637.333633378831
            ) * "ABS_STATISTIC" + 793.826512519948
          ) * "ABS_STATISTIC" + 440.413735824752
        )
        ELSE EXP(-0.5 * "ABS_STATISTIC" * "ABS_STATISTIC") * 0.3989422804014327 * (
          EXP(-1.779355901402371 - 0.0024879380188789694 * "ABS_STATISTIC_INV_SQ") + EXP(-1.2335582973695354 - 0.06923918433800227 * "ABS_STATISTIC_INV_SQ") + EXP(-1.3216829568871193 - 0.4200613752963293 * "ABS_STATISTIC_INV_SQ") + EXP(-1.7957527120028594 - 1.457447795446018 * "ABS_STATISTIC_INV_SQ") + EXP(-2.592588996560229 - 3.7790482726969685 * "ABS_STATISTIC_INV_SQ") + EXP(-3.6903037756070773 - 8.196898098571257 * "ABS_STATISTIC_INV_SQ") + EXP(-5.082794644999896 - 15.765094976695384 * "ABS_STATISTIC_INV_SQ") + EXP(-6.77238349275405 - 27.818470687084773 * "ABS_STATISTIC_INV_SQ") + EXP(-8.767311223343135 - 46.026187267934304 * "ABS_STATISTIC_INV_SQ") + EXP(-11.081049490244487 - 72.46638338239725 * "ABS_STATISTIC_INV_SQ") + EXP(-13.732561585402326 - 109.73164510218608 * "ABS_STATISTIC_INV_SQ") + EXP(-16.747306821312094 - 161.08142520326024 * "ABS_STATISTIC_INV_SQ") + EXP(-20.159099743627795 - 230.6691721355028 * "ABS_STATISTIC_INV_SQ") + EXP(-24.01323430703992 - 323.89458753635904 * "ABS_STATISTIC_INV_SQ") + EXP(-28.371778014826944 - 447.97891338987085 * "ABS_STATISTIC_INV_SQ") + EXP(-33.32302001737664 - 612.9702886561737 * "ABS_STATISTIC_INV_SQ") + EXP(-38.99983382185025 - 833.6692742990255 * "ABS_STATISTIC_INV_SQ") + EXP(-45.62022978993104 - 1133.8319165346581 * "ABS_STATISTIC_INV_SQ") + EXP(-53.59689666481805 - 1557.4224611276752 * "ABS_STATISTIC_INV_SQ") + EXP(-63.967701853691906 - 2212.7489970368088 * "ABS_STATISTIC_INV_SQ")
        ) / "ABS_STATISTIC"
      END
    END AS "MAIN_Z_TAIL",
    CASE
      WHEN "ABS_MARGIN_STATISTIC" > 38.0
      THEN 0.0
      ELSE CASE
        WHEN "ABS_MARGIN_STATISTIC" < 3.0
        THEN EXP(-0.5 * "ABS_MARGIN_STATISTIC" * "ABS_MARGIN_STATISTIC") * (
          (
            (
              (
                (
                  (
                    0.0352624965998911 * "ABS_MARGIN_STATISTIC" + 0.700383064443688
                  ) * "ABS_MARGIN_STATISTIC" + 6.37396220353165
                ) * "ABS_MARGIN_STATISTIC" + 33.912866078383
              ) * "ABS_MARGIN_STATISTIC" + 112.079291497871
            ) * "ABS_MARGIN_STATISTIC" + 221.213596169931
          ) * "ABS_MARGIN_STATISTIC" + 220.206867912376
        ) / (
          (
            (
              (
                (
                  (
                    (
                      0.0883883476483184 * "ABS_MARGIN_STATISTIC" + 1.75566716318264
                    ) * "ABS_MARGIN_STATISTIC" + 16.064177579207
                  ) * "ABS_MARGIN_STATISTIC" + 86.7807322029461
                ) * "ABS_MARGIN_STATISTIC" + 296.564248779674
              ) * "ABS_MARGIN_STATISTIC" + 637.333633378831
            ) * "ABS_MARGIN_STATISTIC" + 793.826512519948
          ) * "ABS_MARGIN_STATISTIC" + 440.413735824752
        )
        ELSE EXP(-0.5 * "ABS_MARGIN_STATISTIC" * "ABS_MARGIN_STATISTIC") * 0.3989422804014327 * (
          EXP(-1.779355901402371 - 0.0024879380188789694 * "ABS_MARGIN_INV_SQ") + EXP(-1.2335582973695354 - 0.06923918433800227 * "ABS_MARGIN_INV_SQ") + EXP(-1.3216829568871193 - 0.4200613752963293 * "ABS_MARGIN_INV_SQ") + EXP(-1.7957527120028594 - 1.457447795446018 * "ABS_MARGIN_INV_SQ") + EXP(-2.592588996560229 - 3.7790482726969685 * "ABS_MARGIN_INV_SQ") + EXP(-3.6903037756070773 - 8.196898098571257 * "ABS_MARGIN_INV_SQ") + EXP(-5.082794644999896 - 15.765094976695384 * "ABS_MARGIN_INV_SQ") + EXP(-6.77238349275405 - 27.818470687084773 * "ABS_MARGIN_INV_SQ") + EXP(-8.767311223343135 - 46.026187267934304 * "ABS_MARGIN_INV_SQ") + EXP(-11.081049490244487 - 72.46638338239725 * "ABS_MARGIN_INV_SQ") + EXP(-13.732561585402326 - 109.73164510218608 * "ABS_MARGIN_INV_SQ") + EXP(-16.747306821312094 - 161.08142520326024 * "ABS_MARGIN_INV_SQ") + EXP(-20.159099743627795 - 230.6691721355028 * "ABS_MARGIN_INV_SQ") + EXP(-24.01323430703992 - 323.89458753635904 * "ABS_MARGIN_INV_SQ") + EXP(-28.371778014826944 - 447.97891338987085 * "ABS_MARGIN_INV_SQ") + EXP(-33.32302001737664 - 612.9702886561737 * "ABS_MARGIN_INV_SQ") + EXP(-38.99983382185025 - 833.6692742990255 * "ABS_MARGIN_INV_SQ") + EXP(-45.62022978993104 - 1133.8319165346581 * "ABS_MARGIN_INV_SQ") + EXP(-53.59689666481805 - 1557.4224611276752 * "ABS_MARGIN_INV_SQ") + EXP(-63.967701853691906 - 2212.7489970368088 * "ABS_MARGIN_INV_SQ")
        ) / "ABS_MARGIN_STATISTIC"
      END
    END AS "MARGIN_Z_TAIL"
  FROM "NORMAL_INPUTS"
), "TESTED" AS (
  SELECT
    *,
    CASE
      WHEN "STATISTIC" IS NULL
      THEN NULL
      WHEN "DF" IS NULL
      THEN 2 * "MAIN_Z_TAIL"
      ELSE 2 * "MAIN_T_UPPER"
    END AS "P_VALUE",
    CASE
      WHEN "MARGIN_STATISTIC" IS NULL
      THEN NULL
      WHEN "DF" IS NULL
      THEN CASE
        WHEN "MARGIN_STATISTIC" >= 0
        THEN "MARGIN_Z_TAIL"
        ELSE 1.0 - "MARGIN_Z_TAIL"
      END
      ELSE "MARGIN_T_UPPER"
    END AS "MARGIN_P_VALUE",
    CASE
      WHEN "DF" IS NULL
      THEN CAST(1.9599639845400536 AS DOUBLE)
      ELSE "CRITICAL_T_VALUE"
    END AS "CRITICAL_VALUE",
    CAST(1.9599639845400536 AS DOUBLE) AS "CRITICAL_Z_VALUE",
    COALESCE("MAIN_T_NOTE", "MARGIN_T_NOTE") AS "P_VALUE_NOTE",
    CASE
      WHEN "METHOD" = 'two_proportion_z'
      AND (
        "TOTAL" < 10
        OR "N" - "TOTAL" < 10
        OR "CONTROL_TOTAL" < 10
        OR "CONTROL_N" - "CONTROL_TOTAL" < 10
      )
      THEN 'fewer than 10 successes or failures in an arm: the Python readout uses the exact test and a score interval for the lift, so no lift interval is shown here'
    END AS "METHOD_NOTE"
  FROM "NORMAL_TAILS"
), "FAMILIES" AS (
  SELECT
    *,
    CASE "FAMILY"
      WHEN 'primary'
      THEN 'none'
      WHEN 'secondary'
      THEN 'bh'
      WHEN 'guardrail'
      THEN 'none'
      WHEN 'segment'
      THEN 'bh'
    END AS "CORRECTION",
    CASE WHEN "FAMILY" = 'guardrail' THEN "MARGIN_P_VALUE" ELSE "P_VALUE" END AS "FAMILY_P_VALUE"
  FROM "TESTED"
), "RANKED" AS (
  SELECT
    *,
    ROW_NUMBER() OVER (
      PARTITION BY "FAMILY"
      ORDER BY CASE WHEN "FAMILY_P_VALUE" IS NULL THEN 1 ELSE 0 END, "FAMILY_P_VALUE", "ROW_ID"
    ) AS "P_RANK",
    COUNT("FAMILY_P_VALUE") OVER (PARTITION BY "FAMILY") AS "FAMILY_SIZE"
  FROM "FAMILIES"
), "ADJUSTED_P" AS (
  SELECT
    *,
    CASE
      WHEN "FAMILY_P_VALUE" IS NULL
      THEN NULL
      WHEN "CORRECTION" = 'holm'
      THEN MAX(
        CASE
          WHEN (
            "FAMILY_SIZE" - "P_RANK" + 1
          ) * "FAMILY_P_VALUE" > 1
          THEN 1.0
          ELSE (
            "FAMILY_SIZE" - "P_RANK" + 1
          ) * "FAMILY_P_VALUE"
        END
      ) OVER (
        PARTITION BY "FAMILY"
        ORDER BY "P_RANK" NULLS FIRST
        ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW
      )
      WHEN "CORRECTION" = 'bh'
      THEN MIN(
        CASE
          WHEN "FAMILY_SIZE" * "FAMILY_P_VALUE" / "P_RANK" > 1
          THEN 1.0
          ELSE "FAMILY_SIZE" * "FAMILY_P_VALUE" / "P_RANK"
        END
      ) OVER (
        PARTITION BY "FAMILY"
        ORDER BY "P_RANK" NULLS FIRST
        ROWS BETWEEN CURRENT ROW AND UNBOUNDED FOLLOWING
      )
      ELSE "FAMILY_P_VALUE"
    END AS "FAMILY_P_ADJUSTED"
  FROM "RANKED"
), "JUDGED" AS (
  SELECT
    *,
    CASE WHEN "FAMILY" = 'guardrail' THEN "P_VALUE" ELSE "FAMILY_P_ADJUSTED" END AS "P_VALUE_ADJUSTED",
    CASE WHEN "FAMILY" = 'guardrail' THEN "MARGIN_P_VALUE" END AS "GUARDRAIL_P_VALUE",
    CASE WHEN "FAMILY" = 'guardrail' THEN "FAMILY_P_ADJUSTED" END AS "GUARDRAIL_P_ADJUSTED",
    CASE
      WHEN CASE WHEN "FAMILY" = 'guardrail' THEN "P_VALUE" ELSE "FAMILY_P_ADJUSTED" END < 0.05
      THEN 1
      ELSE 0
    END AS "SIGNIFICANT",
    CASE
      WHEN "FAMILY" <> 'guardrail'
      THEN NULL
      WHEN "FAMILY_P_ADJUSTED" < 0.05
      THEN 1
      ELSE 0
    END AS "GUARDRAIL_HELD",
    CASE
      WHEN "FAMILY" <> 'guardrail'
      THEN NULL
      WHEN "P_VALUE" < 0.05
      AND (
        (
          "DIRECTION" = 'higher' AND "ESTIMATE" < 0
        )
        OR (
          "DIRECTION" = 'lower' AND "ESTIMATE" > 0
        )
      )
      THEN 1
      ELSE 0
    END AS "GUARDRAIL_HARM"
  FROM "ADJUSTED_P"
), "SIGNALS" AS (
  SELECT
    *,
    CASE
      WHEN "SEGMENT_INDEX" = 0
      AND "FAMILY" = 'primary'
      AND "SIGNIFICANT" = 1
      AND NOT "DIRECTION" IS NULL
      THEN CASE
        WHEN (
          "DIRECTION" = 'higher' AND "ESTIMATE" > 0
        )
        OR (
          "DIRECTION" = 'lower' AND "ESTIMATE" < 0
        )
        THEN 1
        ELSE -1
      END
      ELSE 0
    END AS "PRIMARY_SIGNAL",
    CASE WHEN "SEGMENT_INDEX" = 0 AND "GUARDRAIL_HARM" = 1 THEN 1 ELSE 0 END AS "HARM_SIGNAL",
    CASE
      WHEN "SEGMENT_INDEX" = 0 AND "GUARDRAIL_HELD" = 0 AND "GUARDRAIL_HARM" = 0
      THEN 1
      ELSE 0
    END AS "UNPROVEN_SIGNAL"
  FROM "JUDGED"
), "READOUT" AS (
  SELECT
    *,
    CASE
      WHEN "SRM_P_VALUE" < 0.001
      THEN 'invalid'
      WHEN MAX("HARM_SIGNAL") OVER (PARTITION BY "ARM") = 1
      OR MIN("PRIMARY_SIGNAL") OVER (PARTITION BY "ARM") = -1
      THEN 'unfavourable'
      WHEN MAX("PRIMARY_SIGNAL") OVER (PARTITION BY "ARM") = 1
      AND MAX("UNPROVEN_SIGNAL") OVER (PARTITION BY "ARM") = 0
      THEN 'favourable'
      ELSE 'unclear'
    END AS "VERDICT",
    CASE
      WHEN "SRM_P_VALUE" < 0.001
      THEN 'sample-ratio mismatch: assignment or logging is broken, so read nothing until it is explained'
      WHEN MAX("HARM_SIGNAL") OVER (PARTITION BY "ARM") = 1
      THEN 'a guardrail got significantly worse'
      WHEN MIN("PRIMARY_SIGNAL") OVER (PARTITION BY "ARM") = -1
      THEN 'the primary metric got significantly worse'
      WHEN MAX("PRIMARY_SIGNAL") OVER (PARTITION BY "ARM") = 1
      AND MAX("UNPROVEN_SIGNAL") OVER (PARTITION BY "ARM") = 0
      THEN 'the primary metric improved and every guardrail held'
      WHEN MAX("PRIMARY_SIGNAL") OVER (PARTITION BY "ARM") = 1
      THEN 'the primary metric improved, but a guardrail is not yet shown within its margin'
      ELSE 'no significant change in the primary metric: keep collecting to the planned size, or stop'
    END AS "VERDICT_REASON"
  FROM "SIGNALS"
)
SELECT
  "METRIC",
  "KIND",
  "ROLE",
  "METHOD" AS "TEST",
  "SEGMENT",
  "SEGMENT_VALUE",
  "ARM",
  "N",
  "VALUE",
  "CONTROL_N",
  "CONTROL_VALUE",
  "ESTIMATE",
  "STD_ERROR",
  "STATISTIC",
  "DF",
  "P_VALUE",
  "ESTIMATE" - "CRITICAL_VALUE" * "STD_ERROR" AS "CI_LOW",
  "ESTIMATE" + "CRITICAL_VALUE" * "STD_ERROR" AS "CI_HIGH",
  "RELATIVE_LIFT",
  CASE
    WHEN "METHOD_NOTE" IS NULL
    THEN "RELATIVE_LIFT" - "CRITICAL_Z_VALUE" * "LIFT_STD_ERROR"
  END AS "LIFT_CI_LOW",
  CASE
    WHEN "METHOD_NOTE" IS NULL
    THEN "RELATIVE_LIFT" + "CRITICAL_Z_VALUE" * "LIFT_STD_ERROR"
  END AS "LIFT_CI_HIGH",
  "CORRECTION",
  "P_VALUE_ADJUSTED",
  "SIGNIFICANT",
  "GUARDRAIL_P_VALUE",
  "GUARDRAIL_P_ADJUSTED",
  "GUARDRAIL_HELD",
  "GUARDRAIL_HARM",
  "VERDICT",
  "VERDICT_REASON",
  "SRM_CHI_SQUARE",
  "SRM_P_VALUE",
  COALESCE("P_VALUE_NOTE", "METHOD_NOTE") AS "NOTE"
FROM "READOUT"
ORDER BY
  "METRIC_INDEX",
  "SEGMENT_INDEX",
  "SEGMENT_VALUE",
  "ARM"
