//! NMEA 0183 sentences from a GPS receiver: RMC (UTC date and time, position, fix status) and
//! GGA (position, fix quality, altitude above mean sea level). Pure functions over text: no I/O,
//! no clock.
//!
//! The sentence grammar and the checksum (XOR of every byte between `$` and `*`, written as
//! two hex digits) are the `nmea` crate's (AeroRust, Apache-2.0, built with only its RMC and GGA
//! parsers). It was chosen over a parser of our own because it is kept up by a group that
//! tests it against receivers' logs, and it costs seven small crates (nom, heapless,
//! arrayvec...) with no build script of its own. What it leaves unchecked is checked here:
//! the talker (two capital letters: GP, GN, GL, GA, GB, BD...), minutes of arc below 60,
//! latitude within ±90° and longitude within ±180°, a length cap, and that a sentence
//! claiming a fix carries a position.
//!
//! Conventions: latitude north positive, longitude east positive, degrees (WGS 84, as the
//! receiver reports); `ddmm.mmmm` is degrees and decimal minutes. Altitude is GGA's antenna
//! altitude above mean sea level (the geoid), metres, the height a site's `elevation_m` means.
//! The two-digit RMC year is read as 1983–2082 (NMEA 0183 dates from 1983).

use chrono::{DateTime, NaiveDate, NaiveTime, Utc};

/// Longest line looked at, bytes. NMEA 0183 allows 82 characters including `$` and CR LF;
/// some receivers send longer ones (the `nmea` crate takes up to 102).
pub const MAX_SENTENCE_BYTES: usize = 102;

/// One parsed sentence that matters for a fix.
#[derive(Debug, Clone, PartialEq)]
pub enum Sentence {
    /// Recommended minimum data (RMC).
    Rmc(Rmc),
    /// Fix data (GGA).
    Gga(Gga),
    /// Any other sentence with a good checksum (GSV, GSA, VTG...): ignored.
    Other,
}

/// RMC: `$--RMC,hhmmss.ss,A,ddmm.mm,N,dddmm.mm,E,speed,course,ddmmyy,var,E[,mode[,nav]]*hh`.
#[derive(Debug, Clone, PartialEq)]
pub struct Rmc {
    /// Talker ID (GP, GN, GL, GA, ...).
    pub talker: String,
    /// Status A (data valid) or D (differential): true; V (warning, no fix): false.
    pub valid: bool,
    /// UTC of the fix, when both time and date are given.
    pub utc: Option<DateTime<Utc>>,
    /// Latitude, degrees north; longitude, degrees east.
    pub position_deg: Option<(f64, f64)>,
}

/// GGA: `$--GGA,hhmmss.ss,ddmm.mm,N,dddmm.mm,E,q,sats,hdop,alt,M,sep,M,age,station*hh`.
#[derive(Debug, Clone, PartialEq)]
pub struct Gga {
    /// Talker ID.
    pub talker: String,
    /// UTC time of day of the fix (GGA has no date).
    pub time: Option<NaiveTime>,
    /// Fix quality other than 0 (0 = no fix) and a position given.
    pub valid: bool,
    /// Latitude, degrees north; longitude, degrees east.
    pub position_deg: Option<(f64, f64)>,
    /// Antenna altitude above mean sea level, metres.
    pub altitude_m: Option<f64>,
    /// Satellites used.
    pub satellites: Option<u32>,
    /// Horizontal dilution of precision.
    pub hdop: Option<f64>,
}

/// Why a line is not a usable sentence. Never fatal: the reader counts and skips it.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum NmeaError {
    /// Longer than [`MAX_SENTENCE_BYTES`].
    #[error("longer than {MAX_SENTENCE_BYTES} bytes")]
    TooLong,
    /// Not `$` + talker + type + fields + `*hh`, or not ASCII.
    #[error("not an NMEA sentence")]
    NotSentence,
    /// The checksum does not match the bytes.
    #[error("checksum {found:02X} does not match the sentence ({computed:02X})")]
    Checksum {
        /// Written in the sentence.
        found: u8,
        /// Computed from its bytes.
        computed: u8,
    },
    /// The checksum matched but a field is not what RMC or GGA allow.
    #[error("bad {0} field")]
    Field(&'static str),
}

/// The NMEA 0183 checksum of the bytes between `$` and `*`: their XOR.
pub fn checksum(body: &[u8]) -> u8 {
    body.iter().fold(0, |c, b| c ^ b)
}

/// `body` (what goes between `$` and `*`) as a whole sentence with its checksum, no CR LF.
pub fn with_checksum(body: &str) -> String {
    format!("${body}*{:02X}", checksum(body.as_bytes()))
}

/// Parses one line (trailing CR/LF and blanks allowed).
pub fn parse_sentence(line: &str) -> Result<Sentence, NmeaError> {
    let line = line.trim_end_matches(['\r', '\n', ' ', '\t']);
    if line.len() > MAX_SENTENCE_BYTES {
        return Err(NmeaError::TooLong);
    }
    if !line.is_ascii() || !line.starts_with('$') {
        return Err(NmeaError::NotSentence);
    }
    let (body, sum) = line[1..].rsplit_once('*').ok_or(NmeaError::NotSentence)?;
    let found = (sum.len() == 2)
        .then(|| u8::from_str_radix(sum, 16).ok())
        .flatten()
        .ok_or(NmeaError::NotSentence)?;
    let computed = checksum(body.as_bytes());
    if found != computed {
        return Err(NmeaError::Checksum { found, computed });
    }
    let talker = body.get(..2).ok_or(NmeaError::NotSentence)?;
    if !talker.bytes().all(|b| b.is_ascii_uppercase()) {
        return Err(NmeaError::NotSentence);
    }
    let kind = body.get(2..5).ok_or(NmeaError::NotSentence)?;
    if kind != "RMC" && kind != "GGA" {
        return Ok(Sentence::Other);
    }
    let fields: Vec<&str> = body.split(',').skip(1).collect();
    let parsed = nmea::parse_str(line).map_err(|_| NmeaError::Field(field_name(kind)))?;
    match parsed {
        nmea::ParseResult::RMC(r) => {
            let position_deg = checked_position(&fields, 2, r.lat.zip(r.lon))?;
            let valid = r.status_of_fix != nmea::sentences::rmc::RmcStatusOfFix::Invalid
                && position_deg.is_some();
            let utc = match (r.fix_date, r.fix_time) {
                (Some(d), Some(t)) => Some(utc_of(d, t)),
                _ => None,
            };
            Ok(Sentence::Rmc(Rmc {
                talker: talker.to_string(),
                valid: valid && utc.is_some(),
                utc,
                position_deg,
            }))
        }
        nmea::ParseResult::GGA(g) => {
            let position_deg = checked_position(&fields, 1, g.latitude.zip(g.longitude))?;
            let quality_ok = g
                .fix_type
                .is_some_and(|f| f != nmea::sentences::FixType::Invalid);
            let altitude_m = g
                .altitude
                .map(f64::from)
                .filter(|a| a.is_finite() && (-1000.0..=20_000.0).contains(a));
            Ok(Sentence::Gga(Gga {
                talker: talker.to_string(),
                time: g.fix_time,
                valid: quality_ok && position_deg.is_some(),
                position_deg,
                altitude_m,
                satellites: g.fix_satellites,
                hdop: g.hdop.map(f64::from).filter(|h| h.is_finite()),
            }))
        }
        _ => Ok(Sentence::Other),
    }
}

fn field_name(kind: &str) -> &'static str {
    if kind == "RMC" { "RMC" } else { "GGA" }
}

/// The position the crate read, checked against the raw fields: minutes of arc below 60 (the
/// crate reads `4899.0` as 48° 99′) and latitude and longitude in range. `lat_at` is the index
/// of the latitude field among the data fields (RMC 2, GGA 1).
fn checked_position(
    fields: &[&str],
    lat_at: usize,
    pos: Option<(f64, f64)>,
) -> Result<Option<(f64, f64)>, NmeaError> {
    let Some((lat, lon)) = pos else {
        return Ok(None);
    };
    let minutes_ok = |f: Option<&&str>, deg_digits: usize| {
        f.and_then(|s| s.get(deg_digits..))
            .and_then(|m| m.parse::<f64>().ok())
            .is_some_and(|m| (0.0..60.0).contains(&m))
    };
    if !minutes_ok(fields.get(lat_at), 2) || !(-90.0..=90.0).contains(&lat) {
        return Err(NmeaError::Field("latitude"));
    }
    if !minutes_ok(fields.get(lat_at + 2), 3) || !(-180.0..=180.0).contains(&lon) {
        return Err(NmeaError::Field("longitude"));
    }
    Ok(Some((lat, lon)))
}

fn utc_of(d: NaiveDate, t: NaiveTime) -> DateTime<Utc> {
    d.and_time(t).and_utc()
}

#[cfg(test)]
mod tests;
