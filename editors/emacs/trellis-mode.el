;;; trellis-mode.el --- Major mode for trellis grammar files  -*- lexical-binding: t; -*-

;; Version: 0.1.0
;; Package-Requires: ((emacs "27.1"))
;; Keywords: languages
;; SPDX-License-Identifier: MIT OR Apache-2.0

;;; Commentary:

;; Editing `.trellis' files, the hand-written weighted context-free
;; grammars of trellis: highlighting (keywords, symbols, block names,
;; weights, terminals, comments and `##' doc comments), comment commands
;; (`M-;' writes `# '), indentation of alternatives and test cases inside
;; their block (the layout `trellis fmt' writes), `imenu' over blocks and
;; tests, and an `eglot-server-programs' entry so that `M-x eglot' starts
;; the trellis language server (`trellis lsp').
;;
;;   (add-to-list 'load-path "~/src/trellis/editors/emacs")
;;   (require 'trellis-mode)
;;   (add-hook 'trellis-mode-hook #'eglot-ensure)   ; optional

;;; Code:

(defgroup trellis nil
  "Hand-written weighted context-free grammars."
  :group 'languages
  :prefix "trellis-")

(defcustom trellis-indent-offset 2
  "Columns by which alternatives and test cases are indented in a block."
  :type 'integer
  :safe #'integerp)

(defcustom trellis-lsp-command '("trellis" "lsp")
  "Command (program and arguments) that starts the trellis language server."
  :type '(repeat string))

(defface trellis-weight-face
  '((t :inherit font-lock-constant-face))
  "Face for the weights of alternatives (0.25, 1/4, 25%).")

(defconst trellis-keywords
  '("grammar" "start" "use" "relative" "test" "accept" "reject" "as")
  "The reserved words of the trellis language.")

(defconst trellis--symbol-re "[[:alpha:]_][[:alnum:]_.'+-]*"
  "A symbol name: a letter or `_', then letters, digits and `_ - . \\=' +'.")

(defconst trellis--weight-re
  (let ((number "\\(?:[0-9]+\\(?:\\.[0-9]*\\)?\\|\\.[0-9]+\\)"))
    (concat "\\_<-?" number "\\(?:%\\|/-?" number "\\)?"))
  "A weight: decimal, fraction or percent, optionally negative.")

(defvar trellis-mode-syntax-table
  (let ((table (make-syntax-table)))
    (modify-syntax-entry ?# "<" table)
    (modify-syntax-entry ?\n ">" table)
    (modify-syntax-entry ?\" "\"" table)
    (modify-syntax-entry ?\\ "\\" table)
    ;; Characters of symbol names besides letters and digits.
    (dolist (c '(?_ ?- ?. ?' ?+))
      (modify-syntax-entry c "_" table))
    (dolist (c '(?| ?% ?/ ?= ?, ?\;))
      (modify-syntax-entry c "." table))
    table)
  "Syntax table of `trellis-mode'.")

(defvar trellis-font-lock-keywords
  `((,(regexp-opt trellis-keywords 'symbols) . font-lock-keyword-face)
    (,(concat "\\_<grammar[ \t]+\\(" trellis--symbol-re "\\)")
     1 font-lock-constant-face)
    ;; The name that opens a block: `Name {' or `Name relative {'.
    (,(concat "^[ \t]*\\(" trellis--symbol-re "\\)\\(?:[ \t]+relative\\)?[ \t]*{")
     1 font-lock-function-name-face)
    (,trellis--weight-re . 'trellis-weight-face)
    (,(concat "\\_<" trellis--symbol-re "\\_>") . font-lock-type-face))
  "Highlighting of `trellis-mode' beyond strings and comments.")

(defun trellis--syntactic-face (state)
  "Face of the string or comment described by the `syntax-ppss' STATE.
Comments that start with `##' (not `###') document what follows."
  (cond
   ((nth 3 state) font-lock-string-face)
   ((save-excursion
      (goto-char (nth 8 state))
      (and (looking-at "##") (not (looking-at "###"))))
    font-lock-doc-face)
   (t font-lock-comment-face)))

(defun trellis-indent-line ()
  "Indent the current line: one level per enclosing `{' or `(',
with a line that starts with `}' or `)' at its opener's level."
  (interactive)
  (let* ((depth (car (syntax-ppss (line-beginning-position))))
         (closers (save-excursion
                    (back-to-indentation)
                    (skip-chars-forward "})")))
         (column (* trellis-indent-offset (max 0 (- depth closers))))
         (offset (- (current-column) (current-indentation))))
    (indent-line-to column)
    (when (> offset 0)
      (move-to-column (+ column offset)))))

(defvar trellis-imenu-generic-expression
  `(("Tests" "^[ \t]*test[ \t]+\"\\(\\(?:[^\"\\\\\n]\\|\\\\.\\)*\\)\"" 1)
    ("Blocks" ,(concat "^[ \t]*\\(" trellis--symbol-re "\\)\\(?:[ \t]+relative\\)?[ \t]*{") 1))
  "Blocks and test blocks for `imenu'.")

(defun trellis--lsp-contact (&optional _interactive)
  "How eglot starts the language server: `trellis-lsp-command'."
  trellis-lsp-command)

;;;###autoload
(define-derived-mode trellis-mode prog-mode "trellis"
  "Major mode for trellis grammar files (weighted context-free grammars)."
  :syntax-table trellis-mode-syntax-table
  (setq-local comment-start "# ")
  (setq-local comment-start-skip "#+[ \t]*")
  (setq-local comment-end "")
  (setq-local font-lock-defaults
              '(trellis-font-lock-keywords
                nil nil nil nil
                (font-lock-syntactic-face-function . trellis--syntactic-face)))
  (setq-local indent-line-function #'trellis-indent-line)
  (setq-local indent-tabs-mode nil)
  (setq-local electric-indent-chars (append '(?} ?\)) electric-indent-chars))
  (setq-local imenu-generic-expression trellis-imenu-generic-expression))

;;;###autoload
(add-to-list 'auto-mode-alist '("\\.trellis\\'" . trellis-mode))

(defvar eglot-server-programs)

;;;###autoload
(with-eval-after-load 'eglot
  (add-to-list 'eglot-server-programs '(trellis-mode . trellis--lsp-contact)))

(provide 'trellis-mode)
;;; trellis-mode.el ends here
