// The "normalise" stage: each Observation (a row as read) becomes a Bearing whose azimuth is
// true, whose sigma carries every angular term that applies, and whose derivation records
// how it was made.
//
//   true azimuth = measured + offset, offset = 0 (true), declination (magnetic),
//                  convergence (grid) or heading (relative);
//   sigma^2      = sigma_receiver^2 + sigma_heading^2 + sigma_declination^2
//   (independent errors: variances add). The station-position term depends on the range
//   and is added by the solver.
#include "lobfix/normalise.hpp"

#include <cmath>
#include <map>
#include <sstream>
#include <utility>

#include "lobfix/crs.hpp"
#include "lobfix/geodesy.hpp"
#include "lobfix/interferometer.hpp"
#include "lobfix/magnetic.hpp"
#include "lobfix/time.hpp"

namespace lobfix {

namespace {

std::string degrees_text(double v) {
  std::ostringstream out;
  out.setf(std::ios::fixed);
  out.precision(1);
  out << v;
  return out.str();
}

class Normaliser {
 public:
  Normaliser(const std::vector<Track>& tracks, const NormaliseOptions& options)
      : options_(options) {
    for (const Track& t : tracks)
      by_station_[t.station].push_back(&t);
  }

  NormaliseResult run(const std::vector<Observation>& observations) {
    NormaliseResult result;
    result.bearings.reserve(observations.size());
    for (const Observation& o : observations) {
      Bearing b;
      if (convert(o, &b, &result.errors))
        result.bearings.push_back(std::move(b));
    }
    if (outside_model_years_ > 0) {
      result.warnings.push_back(
          {first_outside_.file, first_outside_.line, 0, "time",
           std::to_string(outside_model_years_) +
               " magnetic bearing(s) dated outside the World Magnetic Model 2025's years "
               "(2025.0 to 2030.0): its declination was extrapolated; give "
               "--declination-deg if a local value is known"});
    }
    return result;
  }

 private:
  void error(const Observation& o, int column, const char* field, std::string reason,
             std::vector<Diagnostic>* errors) const {
    errors->push_back({o.source.file, o.source.line, column, field, std::move(reason)});
  }

  // The tracks of the station, or empty.
  const std::vector<const Track*>* tracks_of(const std::string& station) const {
    const auto it = by_station_.find(station);
    return it == by_station_.end() ? nullptr : &it->second;
  }

  // Position along the first of the station's tracks whose span holds the time.
  bool track_position(const Observation& o, LatLon* where, std::string* source,
                      std::string* reason) const {
    const auto* tracks = tracks_of(o.station);
    if (tracks == nullptr) {
      *reason = "no lat/lon and no track for station '" + o.station +
                "': give the position, or its GPS track with --track";
      return false;
    }
    std::string why;
    for (const Track* t : *tracks) {
      if (const auto p = position_at(*t, o.time_unix_ns, options_.track, &why)) {
        *where = *p;
        *source = t->file;
        return true;
      }
    }
    *reason = why;
    return false;
  }

  bool convert(const Observation& o, Bearing* b, std::vector<Diagnostic>* errors) {
    b->station = o.station;
    b->signal = o.signal;
    b->time_text = o.time_text;
    b->time_unix_ns = o.time_unix_ns;
    b->alt_m = o.alt_m;
    b->pos_sigma_m = o.pos_sigma_m;
    b->source = o.source;
    BearingDerivation& d = b->derivation;
    d.reference = o.reference;

    // Where the station was.
    LatLon at;
    if (o.lat_deg && o.lon_deg) {
      at = {*o.lat_deg, *o.lon_deg};
      d.position_source = "file";
    } else {
      std::string reason;
      if (!track_position(o, &at, &d.position_source, &reason)) {
        error(o, o.columns.lat, "lat", reason, errors);
        return false;
      }
      // A track position carries the GPS error unless the row says otherwise.
      if (b->pos_sigma_m <= 0.0)
        b->pos_sigma_m = options_.track.gps_sigma_m;
    }
    b->lat_deg = at.lat_deg;
    b->lon_deg = at.lon_deg;

    // The measured candidates, in the row's reference.
    double measured = 0.0;
    double sigma = 0.0;
    std::optional<double> alt;
    std::optional<double> alt_sigma;
    if (o.bearing_deg) {
      measured = *o.bearing_deg;
      alt = o.bearing_alt_deg;
      if (!o.sigma_deg) {
        error(o, o.columns.sigma, "sigma_deg", "sigma_deg is missing", errors);
        return false;
      }
      sigma = *o.sigma_deg;
      if (alt)
        alt_sigma = sigma;
    } else {
      InterferometerReading r;
      r.phase_deg = o.phase_deg.value_or(0.0);
      r.phase_sigma_deg = o.phase_sigma_deg.value_or(0.0);
      r.spacing_m = o.spacing_m.value_or(0.0);
      r.frequency_hz = o.frequency_hz.value_or(0.0);
      r.axis_deg = o.axis_deg.value_or(0.0);
      InterferometerBearings ib;
      try {
        ib = interferometer_bearings(r);
      } catch (const InputError& e) {
        error(o, o.columns.phase, e.diagnostic().field.c_str(), e.diagnostic().reason, errors);
        return false;
      }
      if (ib.candidates.size() > 2) {
        std::string list;
        for (const BearingCandidate& c : ib.candidates) {
          list += (list.empty() ? "" : ", ") + degrees_text(c.azimuth_deg);
        }
        error(o, o.columns.spacing, "spacing_m",
              "spacing_m " + degrees_text(r.spacing_m) + " exceeds half a wavelength (" +
                  degrees_text(ib.wavelength_m / 2.0) + " m): the phase wraps and gives " +
                  std::to_string(ib.candidates.size()) + " candidate bearings (" + list +
                  "); give bearing_deg and bearing_alt_deg instead",
              errors);
        return false;
      }
      measured = ib.candidates[0].azimuth_deg;
      sigma = ib.candidates[0].sigma_deg;
      if (ib.candidates.size() == 2) {
        alt = ib.candidates[1].azimuth_deg;
        alt_sigma = ib.candidates[1].sigma_deg;
      }
      d.from_interferometer = true;
    }
    d.measured_deg = measured;
    d.receiver_sigma_deg = sigma;

    // From the row's north to true north.
    double offset = 0.0;
    double extra_var = 0.0;
    switch (o.reference) {
      case BearingReference::true_north:
        break;
      case BearingReference::magnetic: {
        if (options_.declination_deg) {
          offset = *options_.declination_deg;
          d.declination_source = "--declination-deg";
        } else {
          const MagneticDeclination m =
              wmm_declination(at.lat_deg, at.lon_deg, o.alt_m.value_or(0.0), o.time_unix_ns);
          offset = m.declination_deg;
          d.declination_source = m.model;
          if (!m.within_validity && outside_model_years_++ == 0)
            first_outside_ = o.source;
        }
        d.declination_deg = offset;
        d.declination_sigma_deg = options_.declination_sigma_deg;
        extra_var += d.declination_sigma_deg * d.declination_sigma_deg;
        break;
      }
      case BearingReference::grid: {
        if (options_.grid_crs != nullptr) {
          try {
            offset = options_.grid_crs->convergence_deg(at);
          } catch (const InputError& e) {
            error(o, o.columns.bearing, "bearing_deg", e.diagnostic().reason, errors);
            return false;
          }
          d.convergence_source = options_.grid_crs->code();
        } else {
          const GridReference g = grid_reference(at);
          offset = g.convergence_deg;
          d.convergence_source = g.zone > 0
                                     ? "UTM " + std::to_string(g.zone) + (g.northp ? "N" : "S")
                                     : std::string(g.northp ? "UPS N" : "UPS S");
        }
        d.convergence_deg = offset;
        break;
      }
      case BearingReference::relative: {
        if (o.heading_deg) {
          if (!o.heading_sigma_deg) {
            error(o, o.columns.heading, "heading_sigma_deg",
                  "heading_sigma_deg is needed with heading_deg (the heading's 1-sigma)", errors);
            return false;
          }
          offset = *o.heading_deg;
          d.heading_sigma_deg = *o.heading_sigma_deg;
          d.heading_source = "heading_deg column";
        } else {
          const auto* tracks = tracks_of(o.station);
          std::string reason = "relative bearing without heading_deg and no track for station '" +
                               o.station + "' to take the course from: give either";
          std::optional<CourseOverGround> cog;
          if (tracks != nullptr) {
            for (const Track* t : *tracks) {
              cog = course_at(*t, o.time_unix_ns, options_.track, &reason);
              if (cog)
                break;
            }
          }
          if (!cog) {
            error(o, o.columns.heading, "heading_deg", reason, errors);
            return false;
          }
          offset = cog->course_deg;
          d.heading_sigma_deg = cog->sigma_deg;
          d.heading_source = "track course";
        }
        d.heading_deg = offset;
        extra_var += d.heading_sigma_deg * d.heading_sigma_deg;
        break;
      }
    }
    b->azimuth_deg = wrap_deg360(measured + offset);
    b->sigma_deg = std::sqrt(sigma * sigma + extra_var);
    if (alt) {
      b->alt_azimuth_deg = wrap_deg360(*alt + offset);
      b->alt_sigma_deg = std::sqrt(*alt_sigma * *alt_sigma + extra_var);
    }
    return true;
  }

  const NormaliseOptions& options_;
  std::map<std::string, std::vector<const Track*>> by_station_;
  int outside_model_years_ = 0;
  SourceRef first_outside_;
};

}  // namespace

NormaliseResult normalise(const std::vector<Observation>& observations,
                          const std::vector<Track>& tracks, const NormaliseOptions& options) {
  Normaliser n(tracks, options);
  return n.run(observations);
}

}  // namespace lobfix
