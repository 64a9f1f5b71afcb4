//! Output targets that are not plain files (devices, FIFOs, sockets,
//! symbolic links), and interrupted runs: signals and the temporary files
//! they could leave. Every special file is made by the test in its own
//! scratch directory; the system's own nodes are never touched.

use std::fs;
use std::io::Read;
use std::os::unix::fs::FileTypeExt;
use std::os::unix::process::ExitStatusExt;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use crate::support::*;

/// Makes a FIFO with the system's `mkfifo`.
fn mkfifo(path: &Path) {
    let ok = Command::new("mkfifo").arg(path).status().unwrap().success();
    assert!(ok, "mkfifo {}", path.display());
}

/// Reads everything from a FIFO on another thread; the returned closure
/// waits for it. If the writer never opened the FIFO, the closure opens it
/// for writing itself so that the reader is not left waiting.
fn drain_fifo(path: &Path) -> impl FnOnce() -> Vec<u8> {
    let p = path.to_path_buf();
    let reader = std::thread::spawn(move || {
        let mut bytes = Vec::new();
        fs::File::open(&p).unwrap().read_to_end(&mut bytes).unwrap();
        bytes
    });
    let p = path.to_path_buf();
    move || {
        if !reader.is_finished() {
            std::thread::sleep(Duration::from_millis(50));
        }
        if !reader.is_finished() {
            // Unblocks a reader still waiting in `open` (no writer came);
            // harmless when it already has one.
            let _ = fs::OpenOptions::new().write(true).open(&p);
        }
        reader.join().unwrap()
    }
}

fn decompress_bytes(dir: &Scratch, packed: &[u8]) -> Vec<u8> {
    let out = run_in(dir.path(), &["decompress"], Some(packed));
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    out.stdout
}

#[test]
fn a_fifo_is_written_in_place_with_or_without_force() {
    let dir = Scratch::new("fifo");
    let data = gauge_text(3000);
    dir.write("levels.csv", &data);
    let fifo = dir.join("pipe");
    mkfifo(&fifo);
    for args in [
        &["compress", "levels.csv", "-o", "pipe"][..],
        &["compress", "-f", "levels.csv", "-o", "pipe"][..],
    ] {
        let wait = drain_fifo(&fifo);
        let out = run_in(dir.path(), args, None);
        let got = wait();
        assert_eq!(code(&out), 0, "{args:?}: {}", stderr(&out));
        assert!(fs::symlink_metadata(&fifo).unwrap().file_type().is_fifo());
        assert_eq!(decompress_bytes(&dir, &got), data, "{args:?}");
        assert_eq!(dir.entries(), ["levels.csv", "pipe"], "{args:?}");
    }
    // A symbolic link to the FIFO is followed; the link stays a link.
    std::os::unix::fs::symlink("pipe", dir.join("link")).unwrap();
    let out = run_in(dir.path(), &["compress", "levels.csv"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let wait = drain_fifo(&fifo);
    let out = run_in(
        dir.path(),
        &["decompress", "levels.csv.sr", "-o", "link"],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert_eq!(wait(), data);
    assert!(fs::symlink_metadata(dir.join("link")).unwrap().is_symlink());
    assert!(fs::symlink_metadata(&fifo).unwrap().file_type().is_fifo());
}

#[test]
fn a_character_device_is_written_in_place_and_stays_one() {
    let dir = Scratch::new("device");
    let data = gauge_text(2000);
    dir.write("levels.csv", &data);
    let node = dir.join("null");
    // The major and minor numbers of Linux's null device (1, 3: the
    // kernel's Documentation/admin-guide/devices.txt).
    let made = Command::new("mknod")
        .arg(&node)
        .args(["c", "1", "3"])
        .stderr(Stdio::null())
        .status()
        .is_ok_and(|s| s.success());
    if !made {
        println!("skipped: mknod is not permitted here (needs root); device targets untested");
        return;
    }
    for args in [
        &["compress", "levels.csv", "-o", "null"][..],
        &["compress", "--force", "levels.csv", "-o", "null"][..],
    ] {
        let out = run_in(dir.path(), args, None);
        assert_eq!(code(&out), 0, "{args:?}: {}", stderr(&out));
        let t = fs::symlink_metadata(&node).unwrap().file_type();
        assert!(t.is_char_device(), "{args:?}: the node was replaced");
        assert_eq!(dir.entries(), ["levels.csv", "null"], "{args:?}");
    }
    let out = run_in(dir.path(), &["compress", "levels.csv"], None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let out = run_in(
        dir.path(),
        &["decompress", "levels.csv.sr", "-o", "null", "-f"],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert!(fs::symlink_metadata(&node)
        .unwrap()
        .file_type()
        .is_char_device());
}

#[test]
fn a_socket_is_connected_to_not_replaced() {
    let dir = Scratch::new("socket");
    let data = gauge_text(2000);
    dir.write("levels.csv", &data);
    let path = dir.join("sock");
    let listener = std::os::unix::net::UnixListener::bind(&path).unwrap();
    let server = std::thread::spawn(move || {
        let (mut stream, _) = listener.accept().unwrap();
        let mut bytes = Vec::new();
        stream.read_to_end(&mut bytes).unwrap();
        bytes
    });
    let out = run_in(
        dir.path(),
        &["compress", "-f", "levels.csv", "-o", "sock"],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let got = server.join().unwrap();
    assert_eq!(decompress_bytes(&dir, &got), data);
    assert!(fs::symlink_metadata(&path).unwrap().file_type().is_socket());
    assert_eq!(dir.entries(), ["levels.csv", "sock"]);
}

#[test]
fn a_symbolic_link_is_followed_never_replaced() {
    let dir = Scratch::new("symlink");
    let data = gauge_text(1000);
    dir.write("levels.csv", &data);
    dir.write("real.sr", b"old");
    std::os::unix::fs::symlink("real.sr", dir.join("link.sr")).unwrap();
    // To a regular file: the usual rules for it.
    let out = run_in(
        dir.path(),
        &["compress", "levels.csv", "-o", "link.sr"],
        None,
    );
    assert_one_line_failure(&out, 4);
    assert_eq!(fs::read(dir.join("real.sr")).unwrap(), b"old");
    let out = run_in(
        dir.path(),
        &["compress", "-f", "levels.csv", "-o", "link.sr"],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert!(fs::symlink_metadata(dir.join("link.sr"))
        .unwrap()
        .is_symlink());
    let packed = fs::read(dir.join("real.sr")).unwrap();
    assert_eq!(decompress_bytes(&dir, &packed), data);
    assert_eq!(dir.entries(), ["levels.csv", "link.sr", "real.sr"]);
    // To nothing: refused, and nothing is created through it.
    std::os::unix::fs::symlink("missing.sr", dir.join("dangling.sr")).unwrap();
    let out = run_in(
        dir.path(),
        &["compress", "-f", "levels.csv", "-o", "dangling.sr"],
        None,
    );
    assert_one_line_failure(&out, 4);
    assert!(stderr(&out).contains("symbolic link"), "{}", stderr(&out));
    assert!(!dir.join("missing.sr").exists());
}

/// Starts `subrange` with `args` in `dir`, waits until its temporary file
/// appears, and returns the child and the file's name (the caller waits
/// for the child).
#[allow(clippy::zombie_processes)]
fn start_and_wait_for_temp(dir: &Scratch, args: &[&str]) -> (std::process::Child, String) {
    let child = Command::new(env!("CARGO_BIN_EXE_subrange"))
        .args(args)
        .current_dir(dir.path())
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let start = Instant::now();
    loop {
        if let Some(temp) = dir.entries().into_iter().find(|e| e.ends_with(".partial")) {
            // Let it write for a moment.
            std::thread::sleep(Duration::from_millis(100));
            return (child, temp);
        }
        assert!(
            start.elapsed() < Duration::from_secs(60),
            "no temporary file"
        );
        std::thread::sleep(Duration::from_millis(5));
    }
}

fn send(child: &std::process::Child, signal: &str) {
    let ok = Command::new("kill")
        .args([format!("-{signal}"), child.id().to_string()])
        .status()
        .unwrap()
        .success();
    assert!(ok, "kill -{signal}");
}

/// Input large enough that coding it with the `mix` preset on one thread
/// takes a while (about a second on a fast machine).
fn slow_input(dir: &Scratch) {
    dir.write("levels.csv", &subrange::corpus::gauge_csv(5, 3 << 20));
}

#[test]
fn an_interrupting_signal_removes_the_temporary_file() {
    let dir = Scratch::new("signal");
    slow_input(&dir);
    let args = ["compress", "levels.csv", "-p", "mix", "-t", "1"];
    // The numbers are Linux's (signal(7)); the status is the child's own.
    for (name, number) in [("INT", 2), ("TERM", 15), ("HUP", 1)] {
        let (mut child, temp) = start_and_wait_for_temp(&dir, &args);
        assert!(temp.starts_with(".levels.csv.sr.subrange-"), "{temp}");
        send(&child, name);
        let status = child.wait().unwrap();
        assert_eq!(status.signal(), Some(number), "SIG{name}: {status:?}");
        assert_eq!(dir.entries(), ["levels.csv"], "SIG{name}");
    }
}

#[test]
fn an_interrupted_decompression_leaves_nothing() {
    let dir = Scratch::new("signal-dec");
    slow_input(&dir);
    let out = run_in(
        dir.path(),
        &["compress", "levels.csv", "-p", "mix", "-b", "64K"],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    fs::rename(dir.join("levels.csv"), dir.join("original.csv")).unwrap();
    let (mut child, _) = start_and_wait_for_temp(&dir, &["decompress", "levels.csv.sr"]);
    send(&child, "INT");
    let status = child.wait().unwrap();
    assert_eq!(status.signal(), Some(2), "{status:?}");
    assert_eq!(dir.entries(), ["levels.csv.sr", "original.csv"]);
}

#[test]
fn a_killed_run_leaves_a_named_file_that_the_next_run_removes() {
    let dir = Scratch::new("sigkill");
    slow_input(&dir);
    let (mut child, temp) =
        start_and_wait_for_temp(&dir, &["compress", "levels.csv", "-p", "mix", "-t", "1"]);
    send(&child, "KILL");
    let status = child.wait().unwrap();
    assert_eq!(status.signal(), Some(9), "{status:?}");
    // The leftover says what it is: the target's name, the tool, the process.
    let pid = child.id();
    assert!(
        temp.starts_with(&format!(".levels.csv.sr.subrange-{pid}-")) && temp.ends_with(".partial"),
        "{temp}"
    );
    assert_eq!(dir.entries(), [temp.as_str(), "levels.csv"]);
    // The next run over the same target removes it and says so.
    dir.write("small.csv", &gauge_text(100));
    let out = run_in(
        dir.path(),
        &["compress", "small.csv", "-o", "levels.csv.sr"],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    assert!(
        stderr(&out).contains(&temp) && stderr(&out).contains("interrupted"),
        "{}",
        stderr(&out)
    );
    assert_eq!(dir.entries(), ["levels.csv", "levels.csv.sr", "small.csv"]);
}
