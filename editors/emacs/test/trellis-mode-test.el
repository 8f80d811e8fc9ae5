;;; trellis-mode-test.el --- trellis-mode and eglot against `trellis lsp'  -*- lexical-binding: t; -*-

;; Run from the repository root, with TRELLIS_BIN naming the built binary:
;;
;;   emacs --batch -Q -L editors/emacs -l editors/emacs/test/trellis-mode-test.el
;;
;; 1. Faces at chosen places of examples/ferry_kiosk.trellis.
;; 2. Every bundled grammar, with its indentation removed, indents back to
;;    its canonical layout (the examples are in `trellis fmt' layout).
;; 3. eglot starts `trellis lsp' through the mode's `eglot-server-programs'
;;    entry on a copy of examples/broken.trellis; the diagnostics flymake
;;    shows must be on the lines `trellis check --format json' reports, with
;;    the same severities; then the server is shut down.
;;
;; Prints one line per check, then `N passed, N failed', and exits with
;; status 1 when a check failed.

;;; Code:

(require 'package)
;; Debian's elpa-eglot lives here; `-Q' leaves it out of the package path.
(when (file-directory-p "/usr/share/emacs/site-lisp/elpa")
  (add-to-list 'package-directory-list "/usr/share/emacs/site-lisp/elpa"))
(package-initialize)
(require 'cl-lib)
(require 'json)
(require 'trellis-mode)
(require 'eglot)
(require 'flymake)

(defvar trellis-test--passed 0)
(defvar trellis-test--failed 0)

(defun trellis-test--check (name ok &optional detail)
  "Count the check NAME as passed when OK, else print DETAIL."
  (if ok
      (progn (cl-incf trellis-test--passed) (message "ok    %s" name))
    (cl-incf trellis-test--failed)
    (message "FAIL  %s%s" name (if detail (format ": %s" detail) ""))))

(defconst trellis-test--root default-directory)
(defconst trellis-test--bin
  (or (getenv "TRELLIS_BIN") (error "Set TRELLIS_BIN to the trellis binary")))

(defun trellis-test--find (line-text at)
  "Position of AT in the first line containing LINE-TEXT."
  (goto-char (point-min))
  (search-forward line-text)
  (beginning-of-line)
  (search-forward at (line-end-position))
  (- (point) (length at)))

;;; 1. Faces

(defconst trellis-test--faces
  '(("# The Skerrow Isles ferry kiosk" "Skerrow" font-lock-comment-face)
    ("grammar ferry_kiosk" "grammar" font-lock-keyword-face)
    ("grammar ferry_kiosk" "ferry_kiosk" font-lock-constant-face)
    ("start Request" "Request" font-lock-type-face)
    ("use \"ferry_lexicon.trellis\"" "use" font-lock-keyword-face)
    ("use \"ferry_lexicon.trellis\"" "lexicon" font-lock-string-face)
    ("## Everything a traveller" "Everything" font-lock-doc-face)
    ("Request {" "Request" font-lock-function-name-face)
    ("0.45  Purchase" "0.45" trellis-weight-face)
    ("0.45  Purchase" "Purchase" font-lock-type-face)
    ("1/5   Question" "1/5" trellis-weight-face)
    ("8%    Cancellation" "8%" trellis-weight-face)
    ("40%  \"hello\"" "hello" font-lock-string-face)
    ("\"start\" \"again\"" "start" font-lock-string-face)
    ("\"start\" \"again\"" "keywords" font-lock-comment-face)
    ("test \"buying tickets\" {" "test" font-lock-keyword-face)
    ("reject \"to tolsey\"" "reject" font-lock-keyword-face)
    ("accept \"a single to tolsey please\" as" "as (" font-lock-keyword-face)
    ("accept \"a single to tolsey please\" as" "Request" font-lock-type-face))
  "Places in examples/ferry_kiosk.trellis and the face expected there.")

(with-current-buffer (find-file-noselect
                      (expand-file-name "examples/ferry_kiosk.trellis" trellis-test--root))
  (trellis-test--check "ferry_kiosk.trellis opens in trellis-mode"
                       (eq major-mode 'trellis-mode) major-mode)
  (font-lock-ensure)
  (dolist (probe trellis-test--faces)
    (pcase-let* ((`(,line ,at ,face) probe)
                 (found (get-text-property (trellis-test--find line at) 'face)))
      (trellis-test--check (format "face of %S in %S" at line)
                           (if (listp found) (memq face found) (eq face found))
                           (format "expected %s, found %S" face found))))
  (trellis-test--check "M-; writes `# '" (equal comment-start "# ")))

;;; 2. Indentation

(dolist (file (append (directory-files (expand-file-name "examples" trellis-test--root) t "\\.trellis\\'")
                      (directory-files (expand-file-name "cli/src/init" trellis-test--root) t "\\.trellis\\'")))
  (let ((original (with-temp-buffer (insert-file-contents file) (buffer-string))))
    (with-temp-buffer
      (insert original)
      (trellis-mode)
      (goto-char (point-min))
      (while (re-search-forward "^[ \t]+" nil t) (replace-match ""))
      (indent-region (point-min) (point-max))
      (trellis-test--check (format "%s indents back to its layout" (file-name-nondirectory file))
                           (string= (buffer-string) original)))))

;;; 3. eglot and flymake

(defun trellis-test--before-p (a b)
  "Whether the (line . severity) A sorts before B: by line, then severity."
  (or (< (car a) (car b))
      (and (= (car a) (car b))
           (string< (symbol-name (cdr a)) (symbol-name (cdr b))))))

(defun trellis-test--cli-findings (file)
  "The (line . severity) of each finding `trellis check' reports in FILE."
  (with-temp-buffer
    (call-process trellis-test--bin nil '(t nil) nil "check" "--format" "json" file)
    (goto-char (point-min))
    (let ((report (json-parse-buffer :object-type 'alist :array-type 'list)))
      (sort (cl-loop for d in (alist-get 'diagnostics report)
                     when (string= (file-name-nondirectory (alist-get 'file d))
                                   (file-name-nondirectory file))
                     collect (cons (alist-get 'line d)
                                   (pcase (alist-get 'severity d)
                                     ("error" :error) ("warning" :warning) (_ :note))))
            #'trellis-test--before-p))))

(defun trellis-test--flymake-findings ()
  "The (line . type) of each diagnostic flymake shows in this buffer."
  (sort (mapcar (lambda (d)
                  (cons (line-number-at-pos (flymake-diagnostic-beg d))
                        (pcase (flymake-diagnostic-type d)
                          ((or :error 'eglot-error) :error)
                          ((or :warning 'eglot-warning) :warning)
                          (_ :note))))
                (flymake-diagnostics))
        #'trellis-test--before-p))

(let* ((dir (make-temp-file "trellis-emacs" t))
       (broken (expand-file-name "broken.trellis" dir))
       (trellis-lsp-command (list trellis-test--bin "lsp"))
       (limit (+ (float-time) 120))     ; a hung server fails the test (not a measurement)
       found)
  (dolist (name '("broken.trellis" "broken_cycle.trellis"))
    (copy-file (expand-file-name (concat "examples/" name) trellis-test--root)
               (expand-file-name name dir)))
  (let ((expected (trellis-test--cli-findings broken)))
    ;; Shown in a window, as a user would have it: flymake starts checking a
    ;; buffer once it is displayed.
    (with-current-buffer (switch-to-buffer (find-file-noselect broken))
      (trellis-test--check "eglot knows how to start trellis-mode's server"
                           (assoc 'trellis-mode eglot-server-programs))
      (eglot-ensure)
      ;; Batch Emacs has no command loop: run what it would run after each
      ;; command, where eglot-ensure connects and flymake starts its checks.
      (while (and (< (float-time) limit)
                  (not (and (eglot-current-server)
                            (>= (length (setq found (trellis-test--flymake-findings)))
                                (length expected)))))
        (run-hooks 'post-command-hook)
        (accept-process-output nil 0.1))
      (trellis-test--check "eglot started trellis lsp" (eglot-current-server))
      (trellis-test--check "flymake shows the server's diagnostics"
                           (> (length found) 0)
                           "nothing within the time limit")
      (trellis-test--check "flymake's diagnostics are trellis check's (line, severity)"
                           (equal found expected)
                           (format "\n  flymake:       %S\n  trellis check: %S" found expected))
      (let* ((line (save-excursion (trellis-test--find "Snack = \"crisps\"" "=")
                                   (line-number-at-pos)))
             (syntax (cl-find-if (lambda (d)
                                   (= (line-number-at-pos (flymake-diagnostic-beg d)) line))
                                 (flymake-diagnostics))))
        (trellis-test--check "the syntax error at `Snack = \"crisps\"' is an error about `=`"
                             (and syntax
                                  (memq (flymake-diagnostic-type syntax) '(:error eglot-error))
                                  (string-match-p "character `=`" (flymake-diagnostic-text syntax)))
                             (and syntax (flymake-diagnostic-text syntax))))
      ;; eglot sends `shutdown' with `"params": null'; the server must
      ;; accept it and end cleanly.
      (let ((server (eglot-current-server)))
        (trellis-test--check "eglot shuts the server down cleanly"
                             (and server
                                  (condition-case err
                                      (progn (eglot-shutdown server) t)
                                    (error (message "eglot-shutdown: %S" err) nil)))
                             "eglot-shutdown signalled an error"))))
  (delete-directory dir t))

(message "%d passed, %d failed" trellis-test--passed trellis-test--failed)
(kill-emacs (if (zerop trellis-test--failed) 0 1))

;;; trellis-mode-test.el ends here
