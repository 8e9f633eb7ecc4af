/* siteharvest: keyboard and screen-reader access for the parts of the page the component library renders
   without it. Every control is reached with Tab and used with Enter, Space or the arrow keys:
   - a dropdown: its button takes the tab stop (the hidden helper input before it does not);
   - a checklist or a set of radio buttons: a plain group of native inputs (not a list of options);
   - an upload area: the button in it, or else its named file input, takes the stop; Enter or Space opens
     the file chooser;
   - the result tabs: a tab list, each tab a stop; Enter or Space shows it, the arrow keys, Home and End move
     between tabs.
   Runs again whenever the page changes (the editor and the views are rebuilt by callbacks). */
(function () {
  "use strict";

  function setAttr(el, name, value) {
    if (el.getAttribute(name) !== value) { el.setAttribute(name, value); }
  }

  function removeAttr(el, name) {
    if (el.hasAttribute(name)) { el.removeAttribute(name); }
  }

  function fixDropdowns(root) {
    root.querySelectorAll(".dash-dropdown-wrapper > .dash-dropdown-focus-target").forEach(function (helper) {
      if (helper.tabIndex !== -1) { helper.tabIndex = -1; }
      var button = helper.nextElementSibling;
      if (button && button.tagName === "BUTTON" && !button.disabled && button.tabIndex !== 0) { button.tabIndex = 0; }
    });
  }

  function fixOptionLists(root) {
    /* (a dropdown's open menu uses the same classes: it stays a list box of options) */
    root.querySelectorAll(".dash-options-list.dash-checklist, .dash-options-list.dash-radioitems").forEach(function (list) {
      var radios = list.classList.contains("dash-radioitems");
      setAttr(list, "role", radios ? "radiogroup" : "group");
      var field = list.id ? document.querySelector('label[for="' + CSS.escape(list.id) + '"]') : null;
      if (field && !list.hasAttribute("aria-label")) { setAttr(list, "aria-label", field.textContent.trim()); }
      list.querySelectorAll(".dash-options-list-option").forEach(function (option) {
        removeAttr(option, "role");
        removeAttr(option, "aria-selected");
      });
    });
  }

  function fixUploads(root) {
    root.querySelectorAll("div[aria-disabled] > input[type=file]").forEach(function (input) {
      var box = input.parentElement;
      var button = box.querySelector("button");
      var name = button ? (button.textContent.trim() + (button.title ? ": " + button.title : ""))
        : box.textContent.trim();
      if (name) { setAttr(input, "aria-label", name); }
      if (button) {  /* the button is the control; the input under it is left out of the tab order */
        if (input.tabIndex !== -1) { input.tabIndex = -1; }
        setAttr(input, "aria-hidden", "true");
      } else if (!input.classList.contains("sh-upload-input")) {
        input.classList.add("sh-upload-input");  /* (adding a class it has would still count as a change) */
        box.classList.add("sh-upload-keyboard");
      }
    });
  }

  function fixTabs(root) {
    root.querySelectorAll(".tab-container").forEach(function (list) {
      setAttr(list, "role", "tablist");
      if (!list.hasAttribute("aria-label")) { setAttr(list, "aria-label", "Result views"); }
      var selected = null;
      Array.prototype.forEach.call(list.children, function (tab) {
        if (!tab.classList.contains("tab")) { return; }
        var on = tab.classList.contains("tab--selected");
        setAttr(tab, "role", "tab");
        setAttr(tab, "tabindex", "0");
        setAttr(tab, "aria-selected", on ? "true" : "false");
        if (on) { selected = tab; }
      });
      var body = list.parentElement && list.parentElement.querySelector(":scope > .tab-content");
      if (body) {
        setAttr(body, "role", "tabpanel");
        if (selected) { setAttr(body, "aria-label", selected.textContent.trim()); }
      }
    });
  }

  function fixAll() {
    var root = document.body;
    if (!root) { return; }
    fixDropdowns(root);
    fixOptionLists(root);
    fixUploads(root);
    fixTabs(root);
  }

  var pending = false;
  function schedule() {
    if (pending) { return; }
    pending = true;
    Promise.resolve().then(function () { pending = false; fixAll(); });
  }

  function tabsOf(tab) {
    return Array.prototype.filter.call(tab.parentElement.children, function (el) {
      return el.classList.contains("tab");
    });
  }

  /* an upload's button, or a drop area's file input, with the focus: Enter or Space opens the file chooser */
  function uploadInput(el) {
    if (!el || !el.classList) { return null; }
    if (el.classList.contains("sh-upload-input")) { return el; }
    if (el.tagName === "BUTTON" && el.parentElement && el.parentElement.hasAttribute("aria-disabled")) {
      return el.parentElement.querySelector(":scope > input[type=file]");
    }
    return null;
  }

  document.addEventListener("keydown", function (event) {
    if (event.key !== "Enter" && event.key !== " ") { return; }
    var input = uploadInput(event.target);
    if (!input) { return; }
    event.preventDefault();
    if (!event.repeat) { input.click(); }
  });

  document.addEventListener("keyup", function (event) {
    if (event.key === " " && uploadInput(event.target)) { event.preventDefault(); }  /* no second chooser */
  });

  document.addEventListener("keydown", function (event) {
    var tab = event.target;
    if (!tab || !tab.classList || !tab.classList.contains("tab") || tab.getAttribute("role") !== "tab") { return; }
    if (event.key === "Enter" || event.key === " ") {
      event.preventDefault();
      tab.click();
      return;
    }
    var tabs = tabsOf(tab);
    var i = tabs.indexOf(tab);
    var next = null;
    if (event.key === "ArrowRight" || event.key === "ArrowDown") { next = tabs[(i + 1) % tabs.length]; }
    if (event.key === "ArrowLeft" || event.key === "ArrowUp") { next = tabs[(i - 1 + tabs.length) % tabs.length]; }
    if (event.key === "Home") { next = tabs[0]; }
    if (event.key === "End") { next = tabs[tabs.length - 1]; }
    if (next) {
      event.preventDefault();
      next.focus();
    }
  });

  /* the dropdown gives its helper input the tab stop back each time its button loses focus */
  document.addEventListener("focusout", schedule);

  function start() {
    fixAll();
    new MutationObserver(schedule).observe(document.body, {
      childList: true, subtree: true, attributes: true, attributeFilter: ["class", "tabindex", "role", "aria-selected"]
    });
  }

  if (document.readyState === "loading") {
    document.addEventListener("DOMContentLoaded", start);
  } else {
    start();
  }
})();
