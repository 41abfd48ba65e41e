// Command browsercheck opens an HTML file in headless Chromium through the
// DevTools protocol on a pipe (no network port) and fails when the page
// logs a console error or throws, requests anything but file:, data: or about:
// URLs, or renders blank. It is the browser half of .ci/browser.
//
// Usage:
//
//	go run ./.ci/browsercheck [-chromium PATH] [-shot OUT.png] [-full FULL.png] [-print PRINT.png] [-timeout 60s] FILE.html
//
// It prints one line, "browsercheck: pass: ..." or "browsercheck: FAIL: ...",
// and exits 0 or 1 (2 for a usage or start-up problem).
package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/base64"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"image/png"
	"io"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"syscall"
	"time"
)

func main() {
	chromium := flag.String("chromium", "/usr/bin/chromium", "the browser")
	shot := flag.String("shot", "", "save the viewport screenshot here")
	full := flag.String("full", "", "save a screenshot of the whole page here")
	printShot := flag.String("print", "", "save a whole-page screenshot with print styles here")
	timeout := flag.Duration("timeout", 60*time.Second, "give up after this long")
	width := flag.Int("width", 1280, "viewport width in CSS pixels (a laptop screen)")
	height := flag.Int("height", 800, "viewport height in CSS pixels")
	flag.Parse()
	if flag.NArg() != 1 {
		fmt.Fprintln(os.Stderr, "browsercheck: usage: browsercheck [flags] FILE.html")
		os.Exit(2)
	}
	abs, err := filepath.Abs(flag.Arg(0))
	if err == nil {
		_, err = os.Stat(abs)
	}
	if err != nil {
		fmt.Fprintf(os.Stderr, "browsercheck: FAIL: %v\n", err)
		os.Exit(2)
	}
	ctx, cancel := context.WithTimeout(context.Background(), *timeout)
	defer cancel()
	problems, summary, err := check(ctx, *chromium, abs, *width, *height, *shot, *full, *printShot)
	if err != nil {
		fmt.Printf("browsercheck: FAIL: %s: %v\n", flag.Arg(0), err)
		os.Exit(1)
	}
	if len(problems) > 0 {
		fmt.Printf("browsercheck: FAIL: %s: %d problem(s)\n", flag.Arg(0), len(problems))
		for _, p := range problems {
			fmt.Printf("  %s\n", p)
		}
		os.Exit(1)
	}
	fmt.Printf("browsercheck: pass: %s: %s\n", flag.Arg(0), summary)
}

// cdp is a DevTools protocol connection over --remote-debugging-pipe: JSON
// messages separated by NUL bytes, commands on fd 3, replies and events on fd 4.
type cdp struct {
	w      io.Writer
	mu     sync.Mutex
	next   int
	wait   map[int]chan reply
	events chan event
}

type reply struct {
	Result json.RawMessage
	Err    error
}

type event struct {
	Method    string          `json:"method"`
	Params    json.RawMessage `json:"params"`
	SessionID string          `json:"sessionId"`
}

func (c *cdp) read(r io.Reader) {
	br := bufio.NewReaderSize(r, 1<<20)
	for {
		msg, err := br.ReadBytes(0)
		if err != nil {
			close(c.events)
			c.mu.Lock()
			for id, ch := range c.wait {
				ch <- reply{Err: errors.New("browser closed the pipe")}
				delete(c.wait, id)
			}
			c.mu.Unlock()
			return
		}
		msg = msg[:len(msg)-1]
		var m struct {
			ID     int             `json:"id"`
			Result json.RawMessage `json:"result"`
			Error  *struct {
				Message string `json:"message"`
			} `json:"error"`
			event
		}
		if json.Unmarshal(msg, &m) != nil {
			continue
		}
		if m.ID != 0 {
			c.mu.Lock()
			ch := c.wait[m.ID]
			delete(c.wait, m.ID)
			c.mu.Unlock()
			if ch != nil {
				r := reply{Result: m.Result}
				if m.Error != nil {
					r.Err = errors.New(m.Error.Message)
				}
				ch <- r
			}
			continue
		}
		c.events <- m.event
	}
}

func (c *cdp) call(ctx context.Context, session, method string, params any, out any) error {
	c.mu.Lock()
	c.next++
	id := c.next
	ch := make(chan reply, 1)
	c.wait[id] = ch
	msg := map[string]any{"id": id, "method": method}
	if params != nil {
		msg["params"] = params
	}
	if session != "" {
		msg["sessionId"] = session
	}
	b, _ := json.Marshal(msg)
	_, err := c.w.Write(append(b, 0))
	c.mu.Unlock()
	if err != nil {
		return fmt.Errorf("%s: %v", method, err)
	}
	select {
	case r := <-ch:
		if r.Err != nil {
			return fmt.Errorf("%s: %v", method, r.Err)
		}
		if out != nil {
			return json.Unmarshal(r.Result, out)
		}
		return nil
	case <-ctx.Done():
		return fmt.Errorf("%s: timed out", method)
	}
}

func check(ctx context.Context, chromium, path string, width, height int, shot, full, printShot string) ([]string, string, error) {
	profile, err := os.MkdirTemp("", "browsercheck-profile-*")
	if err != nil {
		return nil, "", err
	}
	defer os.RemoveAll(profile)
	toBrowser, cmdW, err := os.Pipe()
	if err != nil {
		return nil, "", err
	}
	fromBrowser, fromW, err := os.Pipe()
	if err != nil {
		return nil, "", err
	}
	cmd := exec.Command(chromium,
		"--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
		"--disable-quic", "--no-first-run", "--disable-component-update", "--disable-sync",
		"--disable-extensions", "--disable-default-apps", "--mute-audio", "--hide-scrollbars",
		"--user-data-dir="+profile,
		// Belt and braces: even a request that slipped through could not
		// leave the machine.
		"--host-resolver-rules=MAP * ~NOTFOUND", "--proxy-server=127.0.0.1:9",
		"--remote-debugging-pipe", "about:blank")
	cmd.ExtraFiles = []*os.File{toBrowser, fromW} // fd 3: commands in, fd 4: replies out
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	// Its own process group, so that the renderer and helper processes go
	// with it on every path out.
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
	if err := cmd.Start(); err != nil {
		return nil, "", fmt.Errorf("starting %s: %v", chromium, err)
	}
	toBrowser.Close()
	fromW.Close()
	defer func() {
		_ = syscall.Kill(-cmd.Process.Pid, syscall.SIGKILL)
		_ = cmd.Wait()
	}()
	c := &cdp{w: cmdW, wait: map[int]chan reply{}, events: make(chan event, 1024)}
	go c.read(fromBrowser)

	var target struct {
		TargetID string `json:"targetId"`
	}
	if err := c.call(ctx, "", "Target.createTarget", map[string]any{"url": "about:blank"}, &target); err != nil {
		return nil, "", err
	}
	var att struct {
		SessionID string `json:"sessionId"`
	}
	if err := c.call(ctx, "", "Target.attachToTarget", map[string]any{"targetId": target.TargetID, "flatten": true}, &att); err != nil {
		return nil, "", err
	}
	s := att.SessionID
	for _, m := range []string{"Runtime.enable", "Log.enable", "Network.enable", "Page.enable"} {
		if err := c.call(ctx, s, m, nil, nil); err != nil {
			return nil, "", err
		}
	}
	if err := c.call(ctx, s, "Emulation.setDeviceMetricsOverride", map[string]any{
		"width": width, "height": height, "deviceScaleFactor": 1, "mobile": false}, nil); err != nil {
		return nil, "", err
	}
	fileURL := (&url.URL{Scheme: "file", Path: filepath.ToSlash(path)}).String()

	var (
		problems []string
		requests []string
		loaded   = make(chan struct{})
		once     sync.Once
		pmu      sync.Mutex
	)
	add := func(p string) {
		pmu.Lock()
		problems = append(problems, p)
		pmu.Unlock()
	}
	done := make(chan struct{})
	go func() {
		defer close(done)
		for ev := range c.events {
			if ev.SessionID != s {
				continue
			}
			switch ev.Method {
			case "Page.loadEventFired":
				once.Do(func() { close(loaded) })
			case "Network.requestWillBeSent":
				var p struct {
					Request struct {
						URL string `json:"url"`
					} `json:"request"`
				}
				_ = json.Unmarshal(ev.Params, &p)
				u := p.Request.URL
				pmu.Lock()
				requests = append(requests, u)
				pmu.Unlock()
				// data: URLs are bytes inside the page (a figure's embedded
				// colour key), not a fetch.
				if !strings.HasPrefix(u, "file:") && !strings.HasPrefix(u, "about:") && !strings.HasPrefix(u, "data:") {
					add("network request: " + short(u))
				}
			case "Runtime.consoleAPICalled":
				var p struct {
					Type string `json:"type"`
					Args []struct {
						Value       any    `json:"value"`
						Description string `json:"description"`
					} `json:"args"`
				}
				_ = json.Unmarshal(ev.Params, &p)
				if p.Type == "error" || p.Type == "assert" {
					var parts []string
					for _, a := range p.Args {
						if a.Description != "" {
							parts = append(parts, a.Description)
						} else {
							parts = append(parts, fmt.Sprint(a.Value))
						}
					}
					add("console " + p.Type + ": " + short(strings.Join(parts, " ")))
				}
			case "Runtime.exceptionThrown":
				var p struct {
					Details struct {
						Text      string `json:"text"`
						Exception struct {
							Description string `json:"description"`
						} `json:"exception"`
					} `json:"exceptionDetails"`
				}
				_ = json.Unmarshal(ev.Params, &p)
				add("uncaught exception: " + short(p.Details.Text+" "+p.Details.Exception.Description))
			case "Log.entryAdded":
				var p struct {
					Entry struct {
						Level, Source, Text, URL string
					} `json:"entry"`
				}
				_ = json.Unmarshal(ev.Params, &p)
				if p.Entry.Level == "error" {
					add("console error (" + p.Entry.Source + "): " + short(p.Entry.Text+" "+p.Entry.URL))
				}
			}
		}
	}()

	var nav struct {
		ErrorText string `json:"errorText"`
	}
	if err := c.call(ctx, s, "Page.navigate", map[string]any{"url": fileURL}, &nav); err != nil {
		return nil, "", err
	}
	if nav.ErrorText != "" {
		return nil, "", fmt.Errorf("navigation: %s", nav.ErrorText)
	}
	select {
	case <-loaded:
	case <-ctx.Done():
		return nil, "", errors.New("page did not finish loading in time")
	}
	// Let late console messages and requests arrive.
	select {
	case <-time.After(700 * time.Millisecond):
	case <-ctx.Done():
	}

	var shotRes struct {
		Data string `json:"data"`
	}
	if err := c.call(ctx, s, "Page.captureScreenshot", map[string]any{"format": "png"}, &shotRes); err != nil {
		return nil, "", err
	}
	img, err := base64.StdEncoding.DecodeString(shotRes.Data)
	if err != nil {
		return nil, "", err
	}
	if shot != "" {
		if err := os.WriteFile(shot, img, 0o644); err != nil {
			return nil, "", err
		}
	}
	colours, inked, err := blankness(img)
	if err != nil {
		return nil, "", fmt.Errorf("screenshot: %v", err)
	}
	// A page of text and figures has hundreds of colours (anti-aliasing);
	// a blank or error page has a handful.
	if colours < 32 || inked < 0.01 {
		add(fmt.Sprintf("screenshot looks blank: %d distinct colours, %.2f%% of pixels differ from the background", colours, 100*inked))
	}
	var metrics struct {
		CSS struct {
			Width, Height float64
		} `json:"cssContentSize"`
	}
	if err := c.call(ctx, s, "Page.getLayoutMetrics", nil, &metrics); err != nil {
		return nil, "", err
	}
	if metrics.CSS.Width > float64(width)+1 {
		add(fmt.Sprintf("page is %.0f px wide in a %d px window: something overflows sideways", metrics.CSS.Width, width))
	}
	fullShot := func(out string) error {
		var r struct {
			Data string `json:"data"`
		}
		if err := c.call(ctx, s, "Page.captureScreenshot", map[string]any{"format": "png", "captureBeyondViewport": true,
			"clip": map[string]any{"x": 0, "y": 0, "width": metrics.CSS.Width, "height": metrics.CSS.Height, "scale": 1}}, &r); err != nil {
			return err
		}
		b, err := base64.StdEncoding.DecodeString(r.Data)
		if err != nil {
			return err
		}
		return os.WriteFile(out, b, 0o644)
	}
	if full != "" {
		if err := fullShot(full); err != nil {
			return nil, "", err
		}
	}
	// The print stylesheet must load without errors too.
	if err := c.call(ctx, s, "Emulation.setEmulatedMedia", map[string]any{"media": "print"}, nil); err != nil {
		return nil, "", err
	}
	// With print styles the page must fit the window's width too: at 700 CSS
	// px that is an A4 page's printable width (210 mm less 2 x 12 mm at 96
	// px per inch is 703 px).
	if err := c.call(ctx, s, "Page.getLayoutMetrics", nil, &metrics); err != nil {
		return nil, "", err
	}
	if metrics.CSS.Width > float64(width)+1 {
		add(fmt.Sprintf("printed, the page is %.0f px wide in a %d px window: something overflows sideways", metrics.CSS.Width, width))
	}
	if printShot != "" {
		if err := fullShot(printShot); err != nil {
			return nil, "", err
		}
	}
	var pdf struct {
		Data string `json:"data"`
	}
	if err := c.call(ctx, s, "Page.printToPDF", map[string]any{"paperWidth": 8.27, "paperHeight": 11.69}, &pdf); err != nil {
		return nil, "", err
	}
	if len(pdf.Data) < 1000 {
		add("printing gave an empty PDF")
	}
	select {
	case <-time.After(300 * time.Millisecond):
	case <-ctx.Done():
	}
	_ = c.call(ctx, "", "Browser.close", nil, nil)
	<-done
	pmu.Lock()
	defer pmu.Unlock()
	sort.Strings(problems)
	summary := fmt.Sprintf("%d request(s), all file: or data:; no console errors; screenshot %d colours, %.1f%% inked; page %.0fx%.0f CSS px; printed %d bytes of PDF",
		len(requests), colours, 100*inked, metrics.CSS.Width, metrics.CSS.Height, len(pdf.Data)*3/4)
	return problems, summary, nil
}

// blankness returns the number of distinct colours in a PNG and the share
// of pixels that differ from its most common colour.
func blankness(b []byte) (int, float64, error) {
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		return 0, 0, err
	}
	r := img.Bounds()
	counts := map[uint32]int{}
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			cr, cg, cb, _ := img.At(x, y).RGBA()
			counts[(cr>>8)<<16|(cg>>8)<<8|cb>>8]++
		}
	}
	most := 0
	for _, n := range counts {
		most = max(most, n)
	}
	total := r.Dx() * r.Dy()
	if total == 0 {
		return 0, 0, errors.New("empty image")
	}
	return len(counts), 1 - float64(most)/float64(total), nil
}

func short(s string) string {
	s = strings.TrimSpace(s)
	if len(s) > 200 {
		return s[:200] + "..."
	}
	return s
}
