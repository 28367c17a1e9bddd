//! The rig-file template written by `skybearing rig init FILE`, and its placeholders.
//!
//! Every value that depends on the place and the hardware (site, time zone, arena mark, sensor
//! port) is written as the placeholder [`PLACEHOLDER`]. A rig file that still holds one is
//! refused by [`crate::rig::config::parse_rig`] (so by `rig check`, `plan --rig` and `run`) with
//! one line naming the file, the line and the field, so a season cannot be archived at a site
//! nobody typed in.

/// The value the template writes where the user must fill in the rig's own value.
pub const PLACEHOLDER: &str = "FILL IN";

/// The commented template written by `skybearing rig init FILE`.
pub const TEMPLATE: &str = r#"# skybearing rig file: the hardware set-up for tethered heading sessions.
# Replace every "FILL IN" (skybearing refuses the file until you have). Angles are degrees,
# clockwise seen from above. Unknown keys are errors, so a misspelt key is caught early.

# Where session folders go (relative to the directory you run skybearing from).
sessions_dir = "sessions"
# name = "rig-1"                     # optional: 1-24 letters, digits, '-'; part of session ids
# The settle window after each turn is not a rig setting: every protocol file sets its own
# settle_s (required there, see docs/protocols.md), so one rig runs protocols with any.

[site]
name = "FILL IN"                     # REQUIRED: a name for people
latitude_deg = "FILL IN"             # REQUIRED: WGS84, north positive, [-90, 90]
longitude_deg = "FILL IN"            # REQUIRED: WGS84, east positive, [-180, 180]
elevation_m = "FILL IN"              # REQUIRED: height above sea level, metres
time_zone = "FILL IN"                # REQUIRED: IANA name such as "Europe/Paris", for display

[arena]
# Bearing of the arena's 0 mark, measured at set-up (never align anything by looking at the
# sun). "magnetic" is corrected with the site's WMM declination: true = magnetic + declination.
mark_bearing_deg = "FILL IN"         # REQUIRED
mark_reference = "FILL IN"           # REQUIRED: "magnetic" or "true"
sky_view_min_elevation_deg = 0.0     # lowest elevation seen over the wall; below it the sun is out of view

[sensor]
# Where heading lines come from: "serial", "stdin" or "replay".
source = "serial"                    # REQUIRED
path = "FILL IN"                     # serial port such as /dev/ttyUSB0, or recorded file
baud = 115200                        # serial only
# pace = "recorded"                  # replay only: "recorded" (needs time_column) or "fast"
lost_after_s = 1.0                   # no line for this long: sensor lost

# One line per sample, columns separated by the delimiter (" " or "\t": any blanks).
delimiter = ","
value_column = 1                     # 1-based column of the heading value
# time_column = 2                    # optional 1-based column of the device's time stamp
# time_unit = "ms"                   # "ms" or "us"
# max_abs_revolutions = 1000.0       # larger values are rejected as out of range

# How a value becomes an arena heading:
#   arena heading = s * value_in_degrees + zero_offset_deg, s = +1 clockwise, -1 counterclockwise
unit = "degrees"                     # REQUIRED: "degrees", "radians" or "counts"
# counts_per_rev = 4096.0            # REQUIRED with unit = "counts"
direction = "clockwise"              # "counterclockwise" for a mirrored view (camera from below)
zero_offset_deg = 0.0                # arena heading at which the sensor reads zero
# Check direction and offset before each day: turn the pin by hand clockwise through
# the arena's 0 and 90 marks and watch the live arena heading follow.

[turntable]
# "serial" (a motor controller speaking docs/turntable-protocol.md) or "manual"
# (you turn the arena by hand when prompted). To rehearse without hardware, use the
# rig file that `skybearing sim --write-rig FILE` writes.
kind = "manual"                      # REQUIRED
# path = "/dev/ttyACM0"              # serial only
# baud = 115200                      # serial only
# timeout_s = 30.0                   # serial only: wait for a reply, retry once, then fault

# Re-scoring a recording: with source = "replay" and a time_column, the file runs on its
# own clock as fast as the machine allows, into the epochs it would have filled live:
#   skybearing run --rig FILE --protocol FILE --animal ID --headless --speed max --start UTC
# --start is the UTC of the file's first line. The turns are in the recording: the
# turntable above (and the polarizer below) is not opened, each turn counts as done at once and prompts are
# confirmed at once. The end of the file ends the session.

# Optional: a polarizer that sets a filter's axis between epochs (protocols whose epochs give
# different cues.filter_axis_deg). Leave it out when there is none. "serial": a controller
# speaking the polarizer part of docs/turntable-protocol.md; "manual": you set it when prompted.
# [polarizer]
# kind = "serial"
# path = "/dev/ttyACM1"
# baud = 115200
# timeout_s = 30                     # wait for a reply, retry once, then fault

# Optional: a GPS receiver sending NMEA 0183 (RMC and GGA sentences) on a serial port. At
# each session start `run` reads it for at most wait_s seconds: a fix gives the session's
# latitude, longitude, elevation and UTC (the site above keeps its name and is used when no
# fix comes in time), and the laptop clock's offset from GPS time is recorded and warned
# about beyond 1 s. The port is closed before the session's first sample.
# [gps]
# path = "/dev/ttyACM2"
# baud = 9600                        # NMEA 0183 receivers: 4800 or 9600 usually
# wait_s = 10.0                      # longest wait for a fix at session start, [0, 600]
"#;

/// The template with every placeholder filled in with the demo site's values (Larkfield
/// Meadow (demo), a magnetic mark at 0, a serial sensor on /dev/ttyUSB0): a valid rig file for
/// tests and examples. `rig init` never writes it.
pub fn filled_example() -> String {
    [
        ("name = \"FILL IN\"", "name = \"Larkfield Meadow (demo)\""),
        ("latitude_deg = \"FILL IN\"", "latitude_deg = 43.2170"),
        ("longitude_deg = \"FILL IN\"", "longitude_deg = 5.4420"),
        ("elevation_m = \"FILL IN\"", "elevation_m = 210.0"),
        ("time_zone = \"FILL IN\"", "time_zone = \"Europe/Paris\""),
        ("mark_bearing_deg = \"FILL IN\"", "mark_bearing_deg = 0.0"),
        (
            "mark_reference = \"FILL IN\"",
            "mark_reference = \"magnetic\"",
        ),
        ("path = \"FILL IN\"", "path = \"/dev/ttyUSB0\""),
    ]
    .iter()
    .fold(TEMPLATE.to_string(), |t, (from, to)| {
        t.replacen(from, to, 1)
    })
}

/// The first line of `text` whose value is still the placeholder: its 1-based line number and
/// dotted field name (`site.latitude_deg`). Comment lines are skipped.
pub fn first_placeholder(text: &str) -> Option<(usize, String)> {
    let mut table = String::new();
    for (i, line) in text.lines().enumerate() {
        let t = line.trim();
        if t.starts_with('#') {
            continue;
        }
        if let Some(rest) = t.strip_prefix('[') {
            if let Some(close) = rest.find(']') {
                table = rest[..close].trim().trim_matches('[').trim().to_string();
            }
            continue;
        }
        let Some((key, value)) = t.split_once('=') else {
            continue;
        };
        let value = value.trim_start();
        if value.starts_with(&format!("\"{PLACEHOLDER}")) || value.starts_with(PLACEHOLDER) {
            let key = key.trim().trim_matches('"');
            let field = if table.is_empty() {
                key.to_string()
            } else {
                format!("{table}.{key}")
            };
            return Some((i + 1, field));
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_template_holds_placeholders_and_the_example_none() {
        assert_eq!(
            first_placeholder(TEMPLATE),
            Some((12, "site.name".to_string()))
        );
        assert_eq!(first_placeholder(&filled_example()), None);
        assert_eq!(TEMPLATE.lines().count(), filled_example().lines().count());
    }

    #[test]
    fn a_commented_placeholder_is_not_one() {
        assert_eq!(first_placeholder("# x = \"FILL IN\"\n[a]\nb = 1\n"), None);
        assert_eq!(
            first_placeholder("[a]\nb = 1\nc = \"FILL IN here\"\n"),
            Some((3, "a.c".to_string()))
        );
    }
}
