//! End-to-end test of the screen for several rigs (issue 15): one `skybearing sim` serves three
//! rigs, rig-2's turntable is made manual (so its turns are prompts), and `skybearing run` shows
//! all three live in tmux. While rig-1 and rig-3 run on, rig-2's prompt is named in the banner
//! and flagged on its row; Enter answers rig-2 (from the rows, and from rig-1's full view),
//! and every session ends complete and valid. Without tmux the test says on stderr that it
//! skipped (`.ci/run` installs tmux and sets `SKYBEARING_REQUIRE_TOOLS=1`).

mod support;
use support::sim::start_sims;
use support::tmux::{Tmux, no_tmux, wait_file};
use support::{BIN, bin, read_json};

/// The rig file with its turntable made manual (turned by hand at the engine's prompt).
fn make_manual(rig: &std::path::Path) {
    let text = std::fs::read_to_string(rig).expect("rig");
    let start = text.find("[turntable]").expect("turntable table");
    let end = start + text[start..].find("\n\n").expect("end of table");
    let manual = format!(
        "{}[turntable]\nkind = \"manual\"{}",
        &text[..start],
        &text[end..]
    );
    std::fs::write(rig, manual).expect("write rig");
}

fn row<'a>(screen: &'a str, rig: &str) -> &'a str {
    screen
        .lines()
        .find(|l| l.len() > 2 && l[2..].starts_with(&format!("{rig} ")))
        .unwrap_or_else(|| panic!("no row for {rig}:\n{screen}"))
}

#[test]
fn a_prompt_on_one_rig_is_named_and_answered_while_the_others_run() {
    if no_tmux("a_prompt_on_one_rig_is_named_and_answered_while_the_others_run") {
        return;
    }
    let tmp = tempfile::tempdir().expect("tmp");
    let (_sim, rigs) = start_sims(
        tmp.path(),
        3,
        &[
            "--seed",
            "31",
            "--stops-per-hour",
            "0",
            "--sun-azimuth-deg",
            "180",
        ],
    );
    make_manual(&rigs[1]);
    let sessions = tmp.path().join("sessions");
    let done = tmp.path().join("exit.txt");
    let script = format!(
        "'{bin}' run --allow-no-sun --protocol '{p}' --rig '{r1}' --animal lm-51 --rig '{r2}' --animal lm-52 --rig '{r3}' --animal lm-53 --sessions '{s}' 2> '{e}'; echo $? > '{d}'; sleep 30",
        bin = BIN,
        p = concat!(env!("CARGO_MANIFEST_DIR"), "/protocols/smoke.toml"),
        r1 = rigs[0].display(),
        r2 = rigs[1].display(),
        r3 = rigs[2].display(),
        s = sessions.display(),
        e = tmp.path().join("err.txt").display(),
        d = done.display()
    );
    let tmux = Tmux::start("skybearing-rigs", &script);
    tmux.cmd(&["resize-window", "-t", "live", "-x", "130", "-y", "30"]);
    // The rows first: one per rig.
    let err = tmp.path().join("err.txt");
    let until = std::time::Instant::now() + std::time::Duration::from_secs(20);
    while !tmux.capture().contains("lm-53") {
        assert!(
            std::time::Instant::now() < until,
            "no rows; stderr: {}",
            std::fs::read_to_string(&err).unwrap_or_default()
        );
        std::thread::sleep(std::time::Duration::from_millis(200));
    }
    let screen = tmux.capture();
    for (rig, animal) in [("rig-1", "lm-51"), ("rig-2", "lm-52"), ("rig-3", "lm-53")] {
        assert!(row(&screen, rig).contains(animal), "{screen}");
    }
    // rig-2's first turn (after its 5-s first epoch) is a prompt, in words and on its row.
    let screen = tmux.wait_for("rig-2 ASKS (Enter answers rig-2): Turn the arena +90°", 30);
    let asking = row(&screen, "rig-2");
    assert!(
        asking.starts_with('!') && asking.contains("ASKS"),
        "{screen}"
    );
    for other in ["rig-1", "rig-3"] {
        let r = row(&screen, other);
        assert!(!r.starts_with('!') && !r.contains("ASKS"), "{screen}");
    }
    // The others run on while rig-2 waits: rig-1 reaches its second epoch on its own.
    let until = std::time::Instant::now() + std::time::Duration::from_secs(20);
    loop {
        let s = tmux.capture();
        if row(&s, "rig-1").contains(" 2/3 ") || row(&s, "rig-1").contains(" 3/3 ") {
            assert!(row(&s, "rig-2").contains("ASKS"), "{s}");
            break;
        }
        assert!(std::time::Instant::now() < until, "rig-1 stood still:\n{s}");
        std::thread::sleep(std::time::Duration::from_millis(200));
    }
    // Enter on the rows answers rig-2.
    tmux.keys("Enter");
    tmux.wait_for("rig-2: prompt confirmed", 5);
    // rig-1's full view forward; rig-2's second prompt still reaches the operator there, on the
    // top line, and Enter answers rig-2, not rig-1.
    tmux.keys("Tab");
    tmux.wait_for("[rig-1] full view", 5);
    let screen = tmux.wait_for("rig-2 ASKS (Enter answers rig-2): Turn the arena -90°", 40);
    assert!(
        screen
            .lines()
            .next()
            .unwrap_or("")
            .starts_with("rig-2 ASKS"),
        "{screen}"
    );
    tmux.keys("Enter");
    tmux.keys("Escape");
    // Every session ends; a key closes the screen and the folders are printed, one per rig.
    tmux.wait_for("EVERY SESSION ENDED", 60);
    tmux.keys("x");
    assert_eq!(wait_file(&done, 20).trim(), "0");
    // The screen has closed: the pane shows the folders it printed.
    let prefix = sessions.display().to_string();
    let folders: Vec<String> = tmux
        .capture()
        .lines()
        .map(str::trim)
        .filter(|l| l.starts_with(&prefix))
        .map(str::to_string)
        .collect();
    assert_eq!(folders.len(), 3, "{folders:?}");
    for (k, f) in folders.iter().enumerate() {
        let dir = std::path::Path::new(f);
        let meta = read_json(&dir.join("session.json"));
        assert_eq!(meta["status"], "complete", "{f}");
        assert_eq!(meta["rig"]["name"], format!("rig-{}", k + 1).as_str());
        let check = bin().arg("check").arg(dir).output().expect("check");
        assert!(check.status.success(), "{f}");
    }
    // rig-2's turns were made by hand at the operator's word.
    let events = std::fs::read_to_string(std::path::Path::new(&folders[1]).join("events.csv"))
        .expect("events");
    assert_eq!(events.matches(",prompt_confirmed,").count(), 2, "{events}");
}
