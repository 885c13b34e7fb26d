"""Placeholder touch app until the field UI lands."""


def run_app() -> int:
    """Start the touch app; returns the exit code."""
    from kivy.app import App
    from kivy.uix.label import Label

    class StakelineApp(App):
        def build(self):
            return Label(text="Stakeline")

    StakelineApp().run()
    return 0
