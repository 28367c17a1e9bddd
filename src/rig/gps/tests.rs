use super::*;
use crate::rig::nmea::with_checksum;

fn at(s: &str) -> DateTime<Utc> {
    DateTime::parse_from_rfc3339(s).unwrap().with_timezone(&Utc)
}

// The classic RMC/GGA pair of the NMEA reference pages (recalled from memory; checksums as
// published, verified by the parser): 12:35:19 UTC, 23 March 1994, 545.4 m.
const RMC: &str = "$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W*6A";
const GGA: &str = "$GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,*47";

fn rig_site() -> crate::sky::Site {
    crate::sky::demo_site()
}

#[test]
fn a_fix_gives_position_altitude_and_the_clock_offset() {
    let mut c = FixCollector::default();
    c.feed(GGA, at("1994-03-23T12:35:19.400Z"));
    assert!(!c.complete() && c.fix().is_none());
    c.feed(RMC, at("1994-03-23T12:35:21.750Z"));
    assert!(c.complete());
    let f = c.fix().unwrap();
    assert!((f.latitude_deg - (48.0 + 7.038 / 60.0)).abs() < 1e-9);
    assert!((f.longitude_deg - (11.0 + 31.0 / 60.0)).abs() < 1e-9);
    assert!((f.elevation_m.unwrap() - 545.4).abs() < 1e-4);
    assert!((f.clock_offset_s - 2.75).abs() < 1e-9);
    assert_eq!(f.satellites, Some(8));
    let start = GpsStart {
        port: "/dev/ttyACM0".into(),
        waited_s: 1.0,
        fix: Some(f),
        no_fix_reason: None,
        rig_file_site: rig_site(),
    };
    let site = start.site();
    assert_eq!(site.name, rig_site().name);
    assert!((site.elevation_m - 545.4).abs() < 1e-4);
    let kinds: Vec<_> = start.events().into_iter().map(|(k, _)| k).collect();
    assert_eq!(kinds, ["gps_fix", "clock_offset"]);
    assert!(start.warnings()[0].contains("2.8 s ahead of GPS time"));
}

#[test]
fn the_smallest_offset_is_kept_and_a_small_one_is_not_warned() {
    let mut c = FixCollector::default();
    c.feed(RMC, at("1994-03-23T12:35:19.900Z"));
    c.feed(RMC, at("1994-03-23T12:35:19.300Z"));
    c.feed(RMC, at("1994-03-23T12:35:19.600Z"));
    let f = c.fix().unwrap();
    assert!((f.clock_offset_s - 0.3).abs() < 1e-9);
    // No GGA: no altitude, the rig file's elevation stays.
    assert_eq!(f.elevation_m, None);
    let start = GpsStart {
        port: "p".into(),
        waited_s: 10.0,
        fix: Some(f),
        no_fix_reason: None,
        rig_file_site: rig_site(),
    };
    assert_eq!(start.site().elevation_m, rig_site().elevation_m);
    assert!(start.warnings().is_empty());
    assert!(
        start.events()[0]
            .1
            .contains("elevation 210.0 m from the rig file")
    );
    // A laptop behind GPS time.
    assert!(clock_warning(-3.0).contains("3.0 s behind GPS time"));
}

#[test]
fn no_fix_sentences_and_garbage_give_no_fix_with_the_reason() {
    let mut c = FixCollector::default();
    c.feed("$GPRMC,,V,,,,,,,,,,N*53", Utc::now());
    c.feed("$GPGGA,,,,,,0,00,99.99,,,,,,*48", Utc::now());
    c.feed(&RMC.replace("*6A", "*00"), Utc::now());
    c.feed("\u{0}\u{1}garbage", Utc::now());
    assert!(c.fix().is_none());
    assert_eq!((c.lines, c.bad, c.no_fix), (4, 2, 2));
    assert!(c.why_no_fix().contains("no fix yet"));
    let start = GpsStart {
        port: "p".into(),
        waited_s: 5.0,
        fix: None,
        no_fix_reason: Some(c.why_no_fix()),
        rig_file_site: rig_site(),
    };
    assert_eq!(start.site(), rig_site());
    assert_eq!(start.events()[0].0, "gps_no_fix");
    assert!(start.warnings()[0].contains("rig file's site"));
    assert_eq!(start.clock_offset_s(), None);
}

/// A reader that hands out its bytes a few at a time, then times out forever.
struct Trickle {
    bytes: Vec<u8>,
    pos: usize,
}

impl Read for Trickle {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        if self.pos >= self.bytes.len() {
            std::thread::sleep(Duration::from_millis(5));
            return Err(std::io::Error::new(std::io::ErrorKind::TimedOut, "no data"));
        }
        let n = 7.min(buf.len()).min(self.bytes.len() - self.pos);
        buf[..n].copy_from_slice(&self.bytes[self.pos..self.pos + n]);
        self.pos += n;
        Ok(n)
    }
}

#[test]
fn reading_stops_at_a_whole_fix_or_at_the_deadline() {
    let overlong = "$".repeat(1000);
    let text = format!(
        "{}\r\n{overlong}\r\nxx\n{}\r\n{}\r\n",
        with_checksum("GPGSV,1,1,01,01,40,083,46"),
        GGA,
        RMC
    );
    let mut r = Trickle {
        bytes: text.into_bytes(),
        pos: 0,
    };
    let c = collect_fix(&mut r, Duration::from_secs(5), &|| {
        at("1994-03-23T12:35:19.5Z")
    });
    assert!(c.complete());
    assert_eq!((c.lines, c.bad), (5, 2));
    // Only garbage: the deadline ends it.
    let mut r = Trickle {
        bytes: b"garbage\n".repeat(10),
        pos: 0,
    };
    let t = Instant::now();
    let c = collect_fix(&mut r, Duration::from_millis(200), &Utc::now);
    assert!(c.fix().is_none() && t.elapsed() < Duration::from_secs(3));
    assert!(c.why_no_fix().contains("bad checksum"));
}

#[test]
fn a_port_that_cannot_be_opened_is_a_start_without_a_fix() {
    let cfg = GpsConfig {
        path: "/nonexistent/gps.tty".into(),
        baud: 9600,
        wait_s: 5.0,
        path_line: Some(40),
    };
    let s = acquire(&cfg, &rig_site(), "rig.toml");
    assert!(s.fix.is_none());
    assert!(s.port.contains("rig.toml:40: gps.path"), "{}", s.port);
    assert!(s.no_fix_reason.unwrap().contains("cannot open the port"));
}

#[test]
fn distances_on_the_sphere() {
    // One degree of a great circle on the mean-radius sphere: 6371.0088 km × π/180.
    let one = 6371.0088 * std::f64::consts::PI / 180.0;
    assert!((distance_km((0.0, 0.0), (0.0, 1.0)) - one).abs() < 1e-9);
    assert!((distance_km((10.0, 20.0), (11.0, 20.0)) - one).abs() < 1e-9);
    assert!((distance_km((0.0, 0.0), (0.0, 180.0)) - 180.0 * one).abs() < 1e-6);
    assert_eq!(distance_km((43.2, 5.4), (43.2, 5.4)), 0.0);
}

#[test]
fn the_live_screen_note_warns_without_a_fix_or_with_a_clock_off() {
    let mut c = FixCollector::default();
    c.feed(RMC, at("1994-03-23T12:35:19.2Z"));
    let mut s = GpsStart {
        port: "p".into(),
        waited_s: 1.0,
        fix: c.fix(),
        no_fix_reason: None,
        rig_file_site: rig_site(),
    };
    assert_eq!(
        s.note(),
        SiteNote {
            text: "GPS".into(),
            warning: false
        }
    );
    s.fix.as_mut().unwrap().clock_offset_s = -4.0;
    assert_eq!(s.note().text, "GPS; laptop clock -4.0 s off");
    assert!(s.note().warning);
    s.fix = None;
    assert!(s.note().warning);
}
