# Whole-program tests of `lobfix report` (docs/report.md). Included from
# tests/cli/CMakeLists.txt (lobfix_cli_case, CLI_OUT). The browser tests are in tests/report.
lobfix_cli_case(report_demo RC 0
  ARGS report ${PROJECT_SOURCE_DIR}/samples/hunt.csv -o ${CLI_OUT}/report.html
       --svg ${CLI_OUT}/report.svg
  STDOUT_RE "Search area of signal 'beacon'" "Report written to .*report.html, map to .*report.svg"
            "A fix is an estimate"
  MUST_EXIST ${CLI_OUT}/report.html ${CLI_OUT}/report.svg)
# EPSG:32613 is WGS 84 / UTM zone 13N, the demo's own zone: the CRS table must repeat the
# UTM easting and northing the summary gives (13N 512392 5024217, rounded to 1 m there).
lobfix_cli_case(report_crs RC 0
  ARGS report ${PROJECT_SOURCE_DIR}/samples/hunt.csv -o ${CLI_OUT}/report_crs.html
       --crs EPSG:32613
  STDOUT_RE "In EPSG:32613 .WGS 84 / UTM zone 13N." "fix +beacon +51239[12]\\.[0-9][0-9][0-9] 502421[67]\\.[0-9][0-9][0-9]"
  MUST_EXIST ${CLI_OUT}/report_crs.html)
lobfix_cli_case(report_unknown_crs RC 2
  ARGS report ${PROJECT_SOURCE_DIR}/samples/hunt.csv -o ${CLI_OUT}/never_report.html
       --crs EPSG:999999
  STDERR_RE "--crs: .*EPSG:999999" MUST_NOT_EXIST ${CLI_OUT}/never_report.html)
lobfix_cli_case(report_needs_output RC 2
  ARGS report ${PROJECT_SOURCE_DIR}/samples/hunt.csv STDERR_RE "--output is required")
lobfix_cli_case(report_bad_input RC 1
  ARGS report ${PROJECT_SOURCE_DIR}/samples/no-such-file.csv -o ${CLI_OUT}/never_report2.html
  MUST_NOT_EXIST ${CLI_OUT}/never_report2.html)
lobfix_cli_case(report_help RC 0 ARGS report --help
  STDOUT_RE "--output" "--svg" "--crs" "--segment-m" "Exit codes")
# --json with --crs: area's document plus the CRS block.
lobfix_cli_case(report_crs_json RC 0
  ARGS report ${PROJECT_SOURCE_DIR}/samples/hunt.csv -o ${CLI_OUT}/report_json.html
       --crs EPSG:32613 --json
  STDOUT_RE "\"search_areas\"" "\"crs\": {" "\"code\": \"EPSG:32613\"" "\"kind\": \"station\""
            "\"easting\": 51[0-9][0-9][0-9][0-9]\\.[0-9]+"
  MUST_EXIST ${CLI_OUT}/report_json.html)
