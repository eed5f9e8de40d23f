//! Reliability of the material library under concurrency, crashes, tampering, hostile input,
//! permissions and a full disk — through the real binary. "Nothing lost or changed" is checked
//! each time by comparing the bytes of what was there before and by `library verify`.

mod common;
mod library_fixture;

use common::{mucurve_in, Scratch};
use library_fixture as fx;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::Duration;

fn spawn(cwd: &Path, args: &[&str]) -> Child {
    Command::new(env!("CARGO_BIN_EXE_mucurve"))
        .args(args)
        .current_dir(cwd)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start mucurve")
}

/// Every file under `dir` with its bytes (an absent folder is empty).
fn snapshot(dir: &Path) -> BTreeMap<PathBuf, Vec<u8>> {
    let mut out = BTreeMap::new();
    if let Ok(rd) = std::fs::read_dir(dir) {
        for e in rd.flatten() {
            let p = e.path();
            if p.is_dir() {
                out.extend(snapshot(&p));
            } else {
                out.insert(p.clone(), std::fs::read(&p).unwrap_or_default());
            }
        }
    }
    out
}

fn version_files(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .map(|rd| {
            rd.flatten()
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .filter(|n| n.starts_with('v') && n.ends_with(".json"))
                .collect()
        })
        .unwrap_or_default();
    v.sort();
    v
}

fn expected_names(n: u32) -> Vec<String> {
    (1..=n).map(|v| format!("v{:04}.json", v)).collect()
}

/// Small deterministic generator for kill delays (xorshift64, Marsaglia 2003).
struct XorShift(u64);
impl XorShift {
    fn next(&mut self, below: u64) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0 % below
    }
}

#[test]
fn eight_concurrent_publishers_get_eight_consecutive_versions() {
    let s = Scratch::new();
    let names: Vec<String> = (0..8).map(|i| format!("fit{}.json", i)).collect();
    for n in &names {
        fx::write_fit(s.dir.path(), n, &fx::good_fit());
    }
    let children: Vec<(String, Child)> = names
        .iter()
        .map(|n| {
            (
                n.clone(),
                spawn(
                    s.dir.path(),
                    &[
                        "publish",
                        n,
                        "--material",
                        "lot",
                        "--library",
                        "lib",
                        "--note",
                        n,
                    ],
                ),
            )
        })
        .collect();
    let mut got = BTreeMap::new();
    for (n, c) in children {
        let out = c.wait_with_output().unwrap();
        let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
        assert!(
            out.status.success(),
            "{n}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let v: u32 = stdout
            .split_whitespace()
            .nth(1)
            .and_then(|r| r.strip_prefix("lot@"))
            .unwrap()
            .parse()
            .unwrap();
        assert!(
            got.insert(v, n.clone()).is_none(),
            "version {v} handed out twice"
        );
    }
    assert_eq!(
        got.keys().copied().collect::<Vec<_>>(),
        (1..=8).collect::<Vec<u32>>()
    );
    assert_eq!(version_files(&s.path("lib/lot")), expected_names(8));
    // Each publisher's fit landed in the version it was told about (nothing lost or swapped).
    let lib = mucurve::library::Library::new(s.path("lib"));
    for (v, n) in got {
        assert_eq!(
            lib.load("lot", Some(v)).unwrap().note.as_deref(),
            Some(n.as_str())
        );
    }
    mucurve_in(s.dir.path(), &["library", "verify", "--library", "lib"]).ok();
}

/// kill -9 at random moments of publish and of retire (which rewrites the event log): after
/// every kill the library verifies clean, versions stay consecutive and earlier files are intact.
#[test]
fn kill_9_during_publish_or_retire_leaves_no_partial_file() {
    let s = Scratch::new();
    // A large fit (≈ 1.5 MB file) widens the window in which a kill lands mid-write.
    fx::write_fit(
        s.dir.path(),
        "big.json",
        &fx::fit_n(&fx::spin_wall(), &[0.01, -0.01], 4000),
    );
    let t0 = std::time::Instant::now();
    mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "big.json",
            "--material",
            "kil",
            "--library",
            "lib",
        ],
    )
    .ok();
    // Kill moments spread over 0 … 1.5 × the time of an uninterrupted publish.
    let window_us = (t0.elapsed().as_micros() as u64 * 3 / 2).max(1000);
    let mut rng = XorShift(0x9E37_79B9_7F4A_7C15 ^ std::process::id() as u64);
    let (mut interrupted, mut completed) = (0, 0);
    for i in 0..30 {
        let before = snapshot(&s.path("lib"));
        let n_before = version_files(&s.path("lib/kil")).len() as u32;
        let mut kids = vec![spawn(
            s.dir.path(),
            &[
                "publish",
                "big.json",
                "--material",
                "kil",
                "--library",
                "lib",
            ],
        )];
        let target = format!("kil@{}", 1 + rng.next(n_before as u64));
        kids.push(spawn(
            s.dir.path(),
            &[
                "library",
                "retire",
                &target,
                "--why",
                "kill test",
                "--library",
                "lib",
            ],
        ));
        std::thread::sleep(Duration::from_micros(rng.next(window_us)));
        for k in &mut kids {
            let _ = k.kill(); // SIGKILL on Unix
        }
        let publish_status = kids.remove(0).wait().unwrap();
        for mut k in kids {
            let _ = k.wait();
        }
        if publish_status.success() {
            completed += 1
        } else {
            interrupted += 1
        }

        let verify = mucurve_in(s.dir.path(), &["library", "verify", "--library", "lib"]);
        assert_eq!(
            verify.code, 0,
            "iteration {i}: verify failed after kill\n{}\n{}",
            verify.stdout, verify.stderr
        );
        let n_after = version_files(&s.path("lib/kil")).len() as u32;
        assert!(
            n_after == n_before || n_after == n_before + 1,
            "iteration {i}: {n_before} → {n_after} versions"
        );
        assert_eq!(version_files(&s.path("lib/kil")), expected_names(n_after));
        for (path, bytes) in before
            .iter()
            .filter(|(p, _)| p.extension().is_some_and(|e| e == "json"))
        {
            assert_eq!(
                &std::fs::read(path).unwrap(),
                bytes,
                "iteration {i}: {} changed",
                path.display()
            );
        }
    }
    eprintln!(
        "kill test: {interrupted} publishes interrupted, {completed} completed before the kill"
    );
    // The next writer cleans up whatever temporary files the kills left.
    let n = version_files(&s.path("lib/kil")).len() as u32;
    let out = mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "big.json",
            "--material",
            "kil",
            "--library",
            "lib",
        ],
    )
    .ok();
    assert!(
        out.stdout.contains(&format!("kil@{}", n + 1)),
        "{}",
        out.stdout
    );
    let verify = mucurve_in(s.dir.path(), &["library", "verify", "--library", "lib"]).ok();
    assert!(
        !verify.stdout.contains("stray temporary file"),
        "{}",
        verify.stdout
    );
}

/// A one-digit change anywhere in a published file breaks its SHA-256 (FIPS 180-4 hash).
#[test]
fn a_flipped_digit_is_detected_by_verify_and_refused_by_readers() {
    let s = Scratch::new();
    fx::write_fit(s.dir.path(), "fit.json", &fx::good_fit());
    for _ in 0..2 {
        mucurve_in(
            s.dir.path(),
            &[
                "publish",
                "fit.json",
                "--material",
                "ni-a",
                "--library",
                "lib",
            ],
        )
        .ok();
    }
    let target = s.path("lib/ni-a/v0002.json");
    let text = std::fs::read_to_string(&target).unwrap();
    // Flip the last digit of μ∞'s neighbour: the first digit after "delta_mu".
    let at = text.find("\"delta_mu\"").unwrap();
    let digit_at = at + text[at..].find(|c: char| c.is_ascii_digit()).unwrap();
    let mut bytes = text.into_bytes();
    bytes[digit_at] = if bytes[digit_at] == b'9' {
        b'8'
    } else {
        bytes[digit_at] + 1
    };
    std::fs::write(&target, &bytes).unwrap();

    let out = mucurve_in(s.dir.path(), &["library", "verify", "--library", "lib"]).failed();
    let faults: Vec<&str> = out
        .stdout
        .lines()
        .filter(|l| l.starts_with("FAULT"))
        .collect();
    assert_eq!(faults.len(), 1, "{}", out.stdout);
    assert!(
        faults[0].contains("v0002.json") && faults[0].contains("sha256"),
        "{}",
        out.stdout
    );
    let show = mucurve_in(
        s.dir.path(),
        &["library", "show", "ni-a@2", "--library", "lib"],
    )
    .failed();
    assert!(show.stderr.contains("v0002.json"), "{}", show.stderr);
    mucurve_in(
        s.dir.path(),
        &["library", "show", "ni-a@1", "--library", "lib"],
    )
    .ok();
}

#[test]
fn hostile_ids_are_refused_with_nothing_written() {
    let s = Scratch::new();
    fx::write_fit(s.dir.path(), "fit.json", &fx::good_fit());
    let before = snapshot(s.dir.path());
    let long = "a".repeat(65);
    let hostile = [
        "",
        "..",
        ".",
        "../escape",
        "a/b",
        "/tmp/abs",
        "a\\b",
        "Upper",
        "has space",
        "-dash",
        ".hidden",
        "tab\there",
        "nl\n",
        "ü",
        long.as_str(),
    ];
    for id in hostile {
        let arg = format!("--material={}", id);
        let out = mucurve_in(
            s.dir.path(),
            &["publish", "fit.json", &arg, "--library", "lib"],
        )
        .failed();
        assert!(
            out.stderr.contains("invalid material id"),
            "{id:?}: {}",
            out.stderr
        );
    }
    assert_eq!(
        snapshot(s.dir.path()),
        before,
        "a refused id wrote something"
    );
    assert!(!s.path("escape").exists() && !Path::new("/tmp/abs").exists());
    // The longest valid id is accepted (64 characters).
    mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "fit.json",
            "--material",
            &long[..64],
            "--library",
            "lib",
        ],
    )
    .ok();
}

/// Permission bits do not stop root.
fn writes_despite_permissions(dir: &Path) -> bool {
    let probe = dir.join(".probe");
    let ok = std::fs::write(&probe, b"x").is_ok();
    let _ = std::fs::remove_file(&probe);
    ok
}

/// The library folder made read-only: by remounting its tmpfs read-only where mounting works
/// (this also stops root), else by permission bits. `None` when neither can stop writes.
fn make_read_only(lib: &Path, mount: &Option<Mount>) -> Option<&'static str> {
    use std::os::unix::fs::PermissionsExt;
    if mount.is_some() {
        let ok = Command::new("mount")
            .args(["-o", "remount,ro"])
            .arg(lib)
            .status()
            .is_ok_and(|s| s.success());
        return ok.then_some("read-only file system");
    }
    for d in [lib.join("ni-a"), lib.to_path_buf()] {
        std::fs::set_permissions(&d, std::fs::Permissions::from_mode(0o555)).unwrap();
    }
    (!writes_despite_permissions(lib)).then_some("folder permissions 0555")
}

fn make_writable(lib: &Path, mount: &Option<Mount>) {
    use std::os::unix::fs::PermissionsExt;
    if mount.is_some() {
        let _ = Command::new("mount")
            .args(["-o", "remount,rw"])
            .arg(lib)
            .status();
    }
    for d in [lib.to_path_buf(), lib.join("ni-a")] {
        let _ = std::fs::set_permissions(&d, std::fs::Permissions::from_mode(0o755));
    }
}

#[test]
fn a_read_only_library_gives_a_clean_error_and_loses_nothing() {
    let s = Scratch::new();
    let lib = s.path("lib");
    let mount = mount_tmpfs(&lib, "1m");
    fx::write_fit(s.dir.path(), "fit.json", &fx::good_fit());
    mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "fit.json",
            "--material",
            "ni-a",
            "--library",
            "lib",
        ],
    )
    .ok();
    let Some(how) = make_read_only(&lib, &mount) else {
        make_writable(&lib, &mount);
        eprintln!("skipped: cannot make a folder read-only here (root without mount rights?)");
        return;
    };
    eprintln!("read-only library by {how}");
    let before = snapshot(&lib);
    let publish = mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "fit.json",
            "--material",
            "ni-a",
            "--library",
            "lib",
        ],
    );
    let promote = mucurve_in(
        s.dir.path(),
        &[
            "library",
            "promote",
            "ni-a@1",
            "--by",
            "A",
            "--why",
            "w",
            "--library",
            "lib",
        ],
    );
    let new_material = mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "fit.json",
            "--material",
            "ni-b",
            "--library",
            "lib",
        ],
    );
    let listed = mucurve_in(s.dir.path(), &["library", "list", "--library", "lib"]);
    let after = snapshot(&lib);
    make_writable(&lib, &mount);
    for out in [publish, promote, new_material] {
        let out = out.failed();
        assert!(
            out.stderr.contains("Permission denied")
                || out.stderr.contains("Read-only file system"),
            "{}",
            out.stderr
        );
    }
    assert!(
        listed.ok().stdout.contains("ni-a"),
        "reading a read-only library must work"
    );
    assert_eq!(after, before);
    mucurve_in(s.dir.path(), &["library", "verify", "--library", "lib"]).ok();
}

/// Unmounts the tmpfs when the test ends, whatever happens.
struct Mount(PathBuf);
impl Drop for Mount {
    fn drop(&mut self) {
        let _ = Command::new("umount").arg("-l").arg(&self.0).status();
    }
}

/// Create `dir` and mount a tmpfs of `size` on it, if this machine allows it.
fn mount_tmpfs(dir: &Path, size: &str) -> Option<Mount> {
    std::fs::create_dir_all(dir).unwrap();
    let ok = Command::new("mount")
        .args(["-t", "tmpfs", "-o", &format!("size={}", size), "tmpfs"])
        .arg(dir)
        .stderr(Stdio::null())
        .status()
        .is_ok_and(|st| st.success());
    ok.then(|| Mount(dir.to_path_buf()))
}

#[test]
fn a_full_disk_gives_a_clean_error_and_loses_nothing() {
    let s = Scratch::new();
    let lib = s.path("lib");
    let Some(_mount) = mount_tmpfs(&lib, "256k") else {
        eprintln!("skipped: cannot mount a small tmpfs here (needs root or CAP_SYS_ADMIN)");
        return;
    };
    fx::write_fit(s.dir.path(), "small.json", &fx::good_fit());
    fx::write_fit(
        s.dir.path(),
        "big.json",
        &fx::fit_n(&fx::spin_wall(), &[0.01, -0.01], 400),
    );
    mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "small.json",
            "--material",
            "ni-a",
            "--library",
            "lib",
        ],
    )
    .ok();
    // Fill the file system to the last byte.
    {
        use std::io::Write;
        let mut filler = std::fs::File::create(lib.join("filler")).unwrap();
        let block = vec![0u8; 4096];
        while filler.write_all(&block).is_ok() {}
        while filler.write_all(&block[..1]).is_ok() {}
    }
    let before = snapshot(&lib);
    let publish = mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "big.json",
            "--material",
            "ni-a",
            "--library",
            "lib",
        ],
    )
    .failed();
    assert!(
        publish.stderr.contains("No space left") || publish.stderr.contains("disk is full"),
        "{}",
        publish.stderr
    );
    let promote = mucurve_in(
        s.dir.path(),
        &[
            "library",
            "promote",
            "ni-a@1",
            "--by",
            "A",
            "--why",
            "w",
            "--library",
            "lib",
        ],
    )
    .failed();
    assert!(
        promote.stderr.contains("No space left") || promote.stderr.contains("disk is full"),
        "{}",
        promote.stderr
    );
    assert_eq!(
        snapshot(&lib),
        before,
        "a failed write changed or left files"
    );
    std::fs::remove_file(lib.join("filler")).unwrap();
    mucurve_in(s.dir.path(), &["library", "verify", "--library", "lib"]).ok();
    let out = mucurve_in(
        s.dir.path(),
        &[
            "publish",
            "big.json",
            "--material",
            "ni-a",
            "--library",
            "lib",
        ],
    )
    .ok();
    assert!(out.stdout.contains("ni-a@2"), "{}", out.stdout);
}
