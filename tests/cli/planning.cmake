# Whole-program tests of the planning commands (next, coverage, simulate, evaluate):
# docs/planning.md. Included from tests/cli/CMakeLists.txt (lobfix_cli_case, CLI_OUT).
set(PLAN_DATA ../data/planning)
set(SAMPLES ${PROJECT_SOURCE_DIR}/samples)

# --- next: the demo hunt's bearings and the sample spots --------------------------------
lobfix_cli_case(next_table RC 0
  ARGS next ${SAMPLES}/hunt.csv --spots ${SAMPLES}/spots.csv --travel-km 1 --rings 2
       --ring-points 8 --geojson ${CLI_OUT}/next.geojson
  STDOUT_RE "Next bearing for signal 'beacon'" "area95 km2" "rank +spot +MGRS"
            "   1  [^ ]+ +13T [A-Z][A-Z] [0-9]+ [0-9]+" "73 spots offered" "A prediction, not a guarantee"
  MUST_EXIST ${CLI_OUT}/next.geojson)
lobfix_cli_case(next_json RC 0
  ARGS next ${SAMPLES}/hunt.csv --spots ${SAMPLES}/spots.csv --json --top 0
  STDOUT_RE "\"ranked\"" "\"predicted_area95_m2\"" "\"mgrs\": \"13T" "\"name\": \"hilltop\""
            "\"rank\": 5,")
lobfix_cli_case(next_needs_spots RC 2 ARGS next ${SAMPLES}/hunt.csv
  STDERR_RE "give candidate spots with --spots FILE and/or --travel-km")
lobfix_cli_case(next_unknown_team RC 2
  ARGS next ${SAMPLES}/hunt.csv --travel-km 1 --team walker-9
  STDERR_RE "--team walker-9: no bearing of that station")
lobfix_cli_case(next_bad_spots RC 1
  ARGS next ${SAMPLES}/hunt.csv --spots ${PLAN_DATA}/bad_spots.csv --geojson ${CLI_OUT}/next_bad.geojson
  STDERR_RE "bad_spots.csv:3:2: lat 95 is outside .-90, 90." "bad_spots.csv:4:3: lon is empty"
            "2 problems in"
  MUST_NOT_EXIST ${CLI_OUT}/next_bad.geojson)

# --- coverage: the sample network ---------------------------------------------------------
lobfix_cli_case(coverage_map RC 0
  ARGS coverage ${SAMPLES}/network.csv -o ${CLI_OUT}/coverage.tif --cell-m 500
       --contours 250,500 --contours-geojson ${CLI_OUT}/coverage_contours.geojson
  STDOUT_RE "Coverage map .*coverage.tif: [0-9]+ x [0-9]+ cells of 500 m, UTM 13N .EPSG:32613."
            "5 stations" "predicted CEP: best [0-9]+ m" "A prediction"
  MUST_EXIST ${CLI_OUT}/coverage.tif ${CLI_OUT}/coverage_contours.geojson)
lobfix_cli_case(coverage_json RC 0
  ARGS coverage ${SAMPLES}/network.csv -o ${CLI_OUT}/coverage_json.tif --cell-m 1000 --json
  STDOUT_RE "\"epsg\": 32613" "\"usable_cells\": [0-9]+" "\"median_cep_m\""
  MUST_EXIST ${CLI_OUT}/coverage_json.tif)
lobfix_cli_case(coverage_bad_sites RC 1
  ARGS coverage ${PLAN_DATA}/bad_sites.csv -o ${CLI_OUT}/coverage_bad.tif
  STDERR_RE "bad_sites.csv:3:5: sigma_deg 'zero' is not a number"
            "bad_sites.csv:4:6: max_range_km -3 is outside .0, 20000." "2 problems in"
  MUST_NOT_EXIST ${CLI_OUT}/coverage_bad.tif)
lobfix_cli_case(coverage_too_big RC 2
  ARGS coverage ${SAMPLES}/network.csv -o ${CLI_OUT}/coverage_big.tif --cell-m 1
  STDERR_RE "more than 25000000"
  MUST_NOT_EXIST ${CLI_OUT}/coverage_big.tif)

# --- simulate: files, reproducibility, and the bearings solved by lobfix solve -------------
lobfix_cli_case(simulate_files RC 0
  ARGS simulate ${SAMPLES}/rehearsal.csv -o ${CLI_OUT}/sim.csv --truth ${CLI_OUT}/sim_truth.csv
       --gpx ${CLI_OUT}/sim.gpx --seed 7 --heading-sigma-deg 3 --wild-rate 0.1 --signal beacon
  STDOUT_RE "15 simulated bearings .[0-9]+ wild. from 4 stations written to .*sim.csv, seed 7"
  MUST_EXIST ${CLI_OUT}/sim.csv ${CLI_OUT}/sim_truth.csv ${CLI_OUT}/sim.gpx)
add_test(NAME cli.simulate_same_seed_same_bytes
         COMMAND sh -c "$<TARGET_FILE:lobfix_app> simulate rehearsal.csv -o - --seed 11 --wild-rate 0.2 > ${CLI_OUT}/seed_a.csv && $<TARGET_FILE:lobfix_app> simulate rehearsal.csv -o - --seed 11 --wild-rate 0.2 > ${CLI_OUT}/seed_b.csv && cmp ${CLI_OUT}/seed_a.csv ${CLI_OUT}/seed_b.csv && ! $<TARGET_FILE:lobfix_app> simulate rehearsal.csv -o - --seed 12 --wild-rate 0.2 | cmp -s - ${CLI_OUT}/seed_a.csv"
         WORKING_DIRECTORY ${SAMPLES})
add_test(NAME cli.simulate_then_solve
         COMMAND sh -c "$<TARGET_FILE:lobfix_app> simulate rehearsal.csv -o - --seed 5 --heading-sigma-deg 2 | $<TARGET_FILE:lobfix_app> solve - --json"
         WORKING_DIRECTORY ${SAMPLES})
set_tests_properties(cli.simulate_then_solve PROPERTIES
  PASS_REGULAR_EXPRESSION "\"status\": \"ok\".*\"reference\": \"relative\"")
lobfix_cli_case(simulate_bad_start RC 2
  ARGS simulate ${SAMPLES}/rehearsal.csv -o ${CLI_OUT}/sim_bad.csv --start yesterday
  STDERR_RE "--start 'yesterday' is not a valid ISO 8601 time"
  MUST_NOT_EXIST ${CLI_OUT}/sim_bad.csv)

# --- evaluate: a short run of the rehearsal ---------------------------------------------------
lobfix_cli_case(evaluate_text RC 0
  ARGS evaluate ${SAMPLES}/rehearsal.csv --trials 200 --seed 3 --robust none
  STDOUT_RE "200 trials from seed 3, 15 bearings each" "RMSE [0-9.]+ m against the Cramer-Rao bound [0-9.]+ m"
            "50% ellipse held the transmitter in [0-9.]+% of the fixes" "95% ellipse held")
lobfix_cli_case(evaluate_json RC 0
  ARGS evaluate ${SAMPLES}/rehearsal.csv --trials 50 --json --confidence 0.5,0.9
  STDOUT_RE "\"trials\": 50" "\"rmse_over_bound\": [0-9.]+" "\"probability\": 0.9")
lobfix_cli_case(evaluate_moving_transmitter RC 1
  ARGS evaluate ${PLAN_DATA}/moving_transmitter.csv --trials 10
  STDERR_RE "moving_transmitter.csv:2: evaluate needs a transmitter that stays put")
lobfix_cli_case(planning_help RC 0 ARGS --help STDOUT_RE "next" "coverage" "simulate" "evaluate")
# Progress goes to stderr only when it is a terminal: under CTest it is a pipe, so nothing.
lobfix_cli_case(evaluate_no_progress_on_pipe RC 0
  ARGS evaluate ${SAMPLES}/rehearsal.csv --trials 300 --json
  STDERR_EXACT ${CLI_EXPECTED}/no_progress.stderr STDOUT_RE "\"trials\": 300")
lobfix_cli_case(coverage_no_progress_on_pipe RC 0
  ARGS coverage ${SAMPLES}/network.csv -o ${CLI_OUT}/coverage_quiet.tif --cell-m 1000 --json
  STDERR_EXACT ${CLI_EXPECTED}/no_progress.stderr MUST_EXIST ${CLI_OUT}/coverage_quiet.tif)
lobfix_cli_case(evaluate_regions RC 0
  ARGS evaluate ${SAMPLES}/rehearsal.csv --trials 5 --seed 3 --regions
  STDOUT_RE "95% ellipse held" "95% region of the probability map held it in [0-9.]+% of the fixes")
